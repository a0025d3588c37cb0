// The host's reading of the board files (shared-protocol/boards/): names, errors, and the board
// models built from them.

import { describe, expect, it } from "vitest";
import { boardProfile, boardProfileNames, REFERENCE_BOARD } from "./board-profile.ts";
import { nominalBoard, referenceBoard, simulatedBoard } from "./board-model.ts";
import { encodeCommand } from "../device/frames.ts";
import { SimTester } from "./sim-tester.ts";

describe("board files on the host", () => {
  it("lists the board files there are, the reference board among them", () => {
    expect(boardProfileNames()).toContain(REFERENCE_BOARD);
    expect(boardProfileNames()).toContain("e6-compact");
  });

  it("refuses an unknown board by code, listing the known ones", () => {
    expect(() => boardProfile("no-such-board")).toThrow(expect.objectContaining({ code: "UNKNOWN_BOARD", message: expect.stringContaining("reference") }));
    expect(() => boardProfile("../package")).toThrow(expect.objectContaining({ code: "UNKNOWN_BOARD" }));
  });

  it("hands out copies: changing one does not change the file's values for the next reader", () => {
    const a = boardProfile(REFERENCE_BOARD);
    a.tanks[0].nominal_f = 5e-9;
    expect(boardProfile(REFERENCE_BOARD).tanks[0].nominal_f).toBe(1e-9);
  });

  it("builds a board's simulated unit from its file: nominal supply, thresholds and tick rate, actual parts", () => {
    const file = boardProfile("e6-compact");
    const b = simulatedBoard(file);
    expect(b.timer.tick_hz).toBe(file.tick_hz);
    expect([b.comparator.rising_v, b.comparator.falling_v]).toEqual(file.thresholds_v);
    expect(b.drive_ohm).toEqual(file.simulated_unit!.drive_ohm);
    expect(b.tank_f).toEqual(file.simulated_unit!.tank_f);
    expect(b.device_id).toBe(file.simulated_unit!.device_id);
    expect(nominalBoard(file).tank_f).toEqual(file.tanks.map((t) => t.nominal_f));
    expect(referenceBoard()).toEqual(simulatedBoard(boardProfile(REFERENCE_BOARD)));
  });

  it("refuses a board file without a simulated unit by code", () => {
    const file = boardProfile(REFERENCE_BOARD);
    delete file.simulated_unit;
    expect(() => simulatedBoard(file)).toThrow(expect.objectContaining({ code: "NO_SIMULATED_UNIT" }));
  });

  it("refuses to simulate a board other than the firmware image's when the firmware selects a range it lacks", () => {
    // The release image is the reference board's (four drives, four tanks); the second board has three of each.
    const sim = new SimTester({ part: null, seed: 1, board: simulatedBoard(boardProfile("e6-compact")) });
    expect(() => sim.input(encodeCommand("MS", [3, 3, 100, 10, 10, 1000]))).toThrow(expect.objectContaining({ code: "SIM_FAULT", message: expect.stringContaining("build-board") }));
    const ok = new SimTester({ part: null, seed: 1 });
    expect(() => ok.input(encodeCommand("MS", [3, 3, 100, 10, 10, 1000]))).not.toThrow();
  });
});
