// The boards the firmware tests run on: each board file's nominal values, its simulated unit and
// its firmware image (the committed release build for the reference board; any other compiled
// from its board file alone, once per test file).

import { parseProfile } from "../../host/src/device/profile.ts";
import type { DeviceProfile } from "../../host/src/device/profile.ts";
import { boardProfile } from "../../host/src/sim/board-profile.ts";
import type { BoardProfile } from "../../host/src/sim/board-profile.ts";
import { nominalBoard, simulatedBoard } from "../../host/src/sim/board-model.ts";
import type { BoardModel } from "../../host/src/sim/board-model.ts";
import type { SimTesterOptions } from "../../host/src/sim/sim-tester.ts";
import { DEFAULT_BOARD } from "../tools/board-source.ts";
import { compileBoardFirmware } from "../tools/build-board.ts";
import { SimLink } from "./sim-link.ts";

export interface BoardUnderTest {
  name: string;
  /** The board file. */
  file: BoardProfile;
  /** Its simulated unit, as the simulated tester runs it (its nominal board when the file describes none). */
  board: BoardModel;
  /** Its firmware image (undefined: the release build, which is the reference board's). */
  image: WebAssembly.Module | undefined;
  /** A line-level link to a simulated tester of this board. */
  link(opts?: Partial<SimTesterOptions>): SimLink;
  /** The profile its firmware reports (PF). */
  profile(): DeviceProfile;
}

/** Builds what the tests need for one board (compiling its image unless it is the release build's). */
export async function boardUnderTest(name: string): Promise<BoardUnderTest> {
  const file = boardProfile(name);
  const board = file.simulated_unit ? simulatedBoard(file) : nominalBoard(file);
  const image = name === DEFAULT_BOARD ? undefined : new WebAssembly.Module(await compileBoardFirmware(name));
  const link = (opts: Partial<SimTesterOptions> = {}) => new SimLink({ board, firmware: image, ...opts });
  return {
    name, file, board, image, link,
    profile: () => {
      const frames = link().send("PF");
      return parseProfile(frames.slice(0, -1));
    },
  };
}
