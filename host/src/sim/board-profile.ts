// Board files: one JSON file per tester board in @henrytick/shared-protocol's boards/ folder
// (schema: boards/board.schema.json there), the same files the firmware's board.ts is generated
// from. The host reads them for the simulated tester: the nominal values a board's firmware
// reports, and one simulated unit of it (board-model.ts turns both into a BoardModel). A live
// tester needs none of this: it reports its own profile (PF).

import { readFileSync, readdirSync } from "node:fs";
import { createRequire } from "node:module";
import { dirname } from "node:path";
import { CodedError } from "../coded-error.ts";

/** A board file (field names and units as in the device profile; SI unless the key says otherwise). */
export interface BoardProfile {
  format: "henrytick-board";
  version: 1;
  name: string;
  description: string;
  tick_hz: number;
  supply_v: number;
  clamp_v: number;
  thresholds_v: [number, number];
  comparator: { noise_v: number; noise_bw_hz: number; delay_rise_s: number; delay_fall_s: number; skew_u_s: number; overdrive_v_s: number; source?: string };
  drives: { ohm: number; power_rating_w: number; energy_rating_j: number; thermal_time_constant_s: number; source: string }[];
  max_charge_us: number;
  tanks: { nominal_f: number; dielectric?: string }[];
  buffer_edges: number;
  max_timeout_ms: number;
  settle_us: number;
  self_test_us: number;
  simulated_unit?: SimulatedUnit;
}

/** One simulated unit of a board: its parts' actual values and the analog details the simulator models. */
export interface SimulatedUnit {
  drive_ohm: number[];
  tank_f: number[];
  fixture_f: number;
  switch_node_f: number;
  sense_ohm: number;
  switch_on_ohm: number;
  diode_v: number;
  clamp_ohm: number;
  tank_k_per_v2: number;
  comparator: {
    offset_v?: number; jitter_s: number; noise_v: number; noise_bw_hz?: number; delay_rise_s: number; delay_fall_s: number;
    overdrive_v_s?: number; noise_model?: "first-passage" | "per-crossing";
  };
  timer: { ppm: number; dead_time_s: number };
  device_id: number;
}

export class BoardProfileError extends CodedError<"UNKNOWN_BOARD" | "NO_SIMULATED_UNIT"> {}

/** The board the simulated tester and the shipped firmware image carry. */
export const REFERENCE_BOARD = "reference";

const require = createRequire(import.meta.url);
let folder: string | undefined;
const cache = new Map<string, BoardProfile>();

/** The folder holding the board files (inside the installed @henrytick/shared-protocol). */
function boardsFolder(): string {
  folder ??= dirname(require.resolve("@henrytick/shared-protocol/boards/board.schema.json"));
  return folder;
}

/** The names of the board files there are. */
export function boardProfileNames(): string[] {
  return readdirSync(boardsFolder()).filter((f) => f.endsWith(".json") && !f.endsWith(".schema.json")).map((f) => f.slice(0, -5)).sort();
}

/**
 * One board file by name (the file's name without .json). The files ship with the package and a
 * test checks each against the schema, so they are read as they are; a copy is kept.
 */
export function boardProfile(name: string = REFERENCE_BOARD): BoardProfile {
  const cached = cache.get(name);
  if (cached) return structuredClone(cached);
  const names = boardProfileNames();
  if (!names.includes(name)) {
    throw new BoardProfileError("UNKNOWN_BOARD", `no board file "${name}"; the boards are ${names.join(", ")} (add one as docs/porting.md, "The board profile", describes)`);
  }
  const profile = JSON.parse(readFileSync(`${boardsFolder()}/${name}.json`, "utf8")) as BoardProfile;
  cache.set(name, profile);
  return structuredClone(profile);
}
