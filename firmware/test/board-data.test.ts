// Board profiles as data: every board file in shared-protocol/boards/ is sound, the committed
// firmware/assembly/board.ts is the one generated from the reference board's file, and an image
// built from any board's file reports exactly that file's values in its profile (PF).

import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { beforeAll, describe, expect, it } from "vitest";
import { parseProfile } from "../../host/src/device/profile.ts";
import { BOARD_TS, DEFAULT_BOARD, type BoardData, boardNames, boardProblems, boardSource, loadBoard } from "../tools/board-source.ts";
import { compileBoardFirmware, keptImagePath } from "../tools/build-board.ts";
import { hasHostGcc } from "../ports/native-build.ts";
import { SimLink, show } from "./sim-link.ts";

const names = boardNames();

describe("board files", () => {
  it("include the reference board and a second one", () => {
    expect(names).toContain(DEFAULT_BOARD);
    expect(names.length).toBeGreaterThanOrEqual(2);
  });

  it.each(names)("%s conforms to the board schema and converts exactly to the firmware's units", (name) => {
    expect(boardProblems(JSON.parse(readFileSync(new URL(`../../shared-protocol/boards/${name}.json`, import.meta.url), "utf8")), name)).toEqual([]);
  });

  it("the committed board.ts is generated from the reference board (npm run build -w firmware regenerates it)", () => {
    expect(readFileSync(BOARD_TS, "utf8")).toBe(boardSource(loadBoard(DEFAULT_BOARD)));
  });

  it("refuses a board the firmware could not carry, naming the field", () => {
    const good = loadBoard("reference");
    const edit = (f: (b: BoardData) => void) => {
      const b = structuredClone(good);
      f(b);
      return boardProblems(b, "reference");
    };
    expect(edit(() => {})).toEqual([]);
    expect(edit((b) => (b.tanks[0].nominal_f = 1.0005e-9))).toEqual([expect.stringMatching(/^\/tanks\/0\/nominal_f .*whole number/)]);
    expect(edit((b) => (b.tick_hz = 64_500_000))).toEqual([expect.stringMatching(/^\/tick_hz /)]);
    expect(edit((b) => (b.comparator.delay_rise_s = 45.0005e-9))).toEqual([expect.stringMatching(/^\/comparator\/delay_rise_s .*whole number of ps/)]);
    expect(edit((b) => (b.thresholds_v = [-0.005, 0.035]))).toEqual([expect.stringMatching(/^\/thresholds_v .*above/)]);
    expect(edit((b) => delete (b as Partial<BoardData>).drives)).toEqual([expect.stringMatching(/drives/)]);
    expect(edit((b) => (b.drives[1].ohm = "100" as unknown as number))).toEqual([expect.stringMatching(/^\/drives\/1\/ohm /)]);
    expect(edit((b) => (b.name = "other"))).toEqual([expect.stringMatching(/^\/name /)]);
    expect(edit((b) => b.simulated_unit!.tank_f.pop())).toEqual([expect.stringMatching(/^\/simulated_unit\/tank_f has 3 values for 4 tanks/)]);
    expect(() => loadBoard("no-such-board")).toThrow(/the boards are .*reference/);
  });
});

describe.each(names)("the firmware built for board %s", (name) => {
  const board = loadBoard(name);
  let image: WebAssembly.Module | undefined;
  beforeAll(async () => {
    // The reference board is the committed build; any other is compiled from its file alone.
    if (name !== DEFAULT_BOARD) image = new WebAssembly.Module(await compileBoardFirmware(name));
  });

  it("reports every value of its board file in its profile", () => {
    const link = new SimLink({ firmware: image });
    const frames = link.send("PF");
    expect(show(frames[frames.length - 1])).toBe("OK PF");
    const p = parseProfile(frames.slice(0, -1));
    expect(p.tick_hz).toBe(board.tick_hz);
    expect(p.supply_v).toBe(board.supply_v);
    expect(p.clamp_v).toBe(board.clamp_v);
    expect(p.thresholds_v).toEqual(board.thresholds_v);
    expect(p.drives.map((d) => [d.ohm, d.power_rating_w, d.energy_rating_j, d.thermal_time_constant_s])).toEqual(
      board.drives.map((d) => [d.ohm, d.power_rating_w, d.energy_rating_j, d.thermal_time_constant_s]),
    );
    p.tanks.forEach((t, i) => expect(t.nominal_f).toBeCloseTo(board.tanks[i].nominal_f, 20));
    expect(p.tanks).toHaveLength(board.tanks.length);
    expect(p.buffer_edges).toBe(board.buffer_edges);
    expect(p.max_timeout_ms).toBe(board.max_timeout_ms);
    expect(p.settle_us).toBe(board.settle_us);
    expect(p.max_charge_us).toBe(board.max_charge_us);
    expect(p.self_test_us).toBe(board.self_test_us);
    // The comparator's timing (frame PD), each to its integer unit's rounding.
    for (const k of ["noise_v", "noise_bw_hz", "delay_rise_s", "delay_fall_s", "skew_u_s", "overdrive_v_s"] as const) {
      expect(p.comparator![k], k).toBeCloseTo(board.comparator[k], 9 - Math.floor(Math.log10(Math.abs(board.comparator[k]) || 1)));
    }
  });
});

describe("the C ports and the board's tick rate", () => {
  const note = hasHostGcc ? "" : " (skipped: Debian package gcc not installed)";
  /** Compiles the STM32F411CE clock tree against a henrytick-board.h stating `tickHz`. */
  const clockTree = (tickHz: number) => {
    const dir = mkdtempSync(join(tmpdir(), "ht-board-h-"));
    writeFileSync(join(dir, "henrytick-board.h"), `#define HT_BOARD_TICK_HZ ${tickHz}u\n`);
    const f411 = fileURLToPath(new URL("../ports/f411/", import.meta.url));
    return spawnSync("gcc", ["-std=c11", "-fsyntax-only", "-I", dir, "-I", f411, "-x", "c", "-"], { input: '#include "clock.h"\n', encoding: "utf8" });
  };

  it.skipIf(!hasHostGcc)(`the F411 clock tree builds for the reference board's tick and refuses another board's${note}`, () => {
    expect(clockTree(loadBoard("reference").tick_hz).status).toBe(0);
    const other = clockTree(loadBoard("e6-compact").tick_hz);
    expect(other.status).not.toBe(0);
    expect(other.stderr).toMatch(/TIM2 at the board's tick rate/);
  });
});

describe("kept board images", () => {
  it("are reused only while every file the compiler read is unchanged", async () => {
    const name = "e6-compact";
    const real = await compileBoardFirmware(name); // compiled, or the kept image
    const kept = JSON.parse(readFileSync(keptImagePath(name), "utf8"));
    const dir = mkdtempSync(join(tmpdir(), "ht-kept-"));
    // A kept record whose digests all match is reused as it is (here: a marker, not a real image).
    const marker = join(dir, "marker.json");
    writeFileSync(marker, JSON.stringify({ ...kept, wasm: Buffer.from("marker").toString("base64") }));
    expect(Buffer.from(await compileBoardFirmware(name, marker)).toString()).toBe("marker");
    // One digest off (as after an edit to that source): compiled again, the real image.
    const stale = join(dir, "stale.json");
    const files = { ...kept.files };
    const someSource = Object.keys(files).find((f) => f.endsWith("interlocks.ts"))!;
    files[someSource] = "0".repeat(64);
    writeFileSync(stale, JSON.stringify({ ...kept, files, wasm: Buffer.from("marker").toString("base64") }));
    expect(Buffer.from(await compileBoardFirmware(name, stale)).equals(Buffer.from(real))).toBe(true);
    // Another compiler version: compiled again too.
    const otherAsc = join(dir, "asc.json");
    writeFileSync(otherAsc, JSON.stringify({ ...kept, asc: "0.0.0", wasm: Buffer.from("marker").toString("base64") }));
    expect(Buffer.from(await compileBoardFirmware(name, otherAsc)).equals(Buffer.from(real))).toBe(true);
  });
});
