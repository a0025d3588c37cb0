// The firmware's board profile as data: reads a board file (shared-protocol/boards/NAME.json,
// checked against board.schema.json there) and writes the AssemblyScript source the firmware
// compiles, firmware/assembly/board.ts. The committed board.ts is the reference board's;
// `npm run build -w firmware` regenerates it, and firmware/test/board-data.test.ts fails when the
// committed copy is stale. Other boards are built without touching it (build-board.ts).
//   npx tsx firmware/tools/board-source.ts            write board.ts from the reference board
//   npx tsx firmware/tools/board-source.ts --check    exit 1 if board.ts is stale

import { readFileSync, readdirSync, writeFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import ajvModule from "ajv/dist/2020.js";
import type { BoardProfile } from "../../host/src/sim/board-profile.ts";

export const BOARDS_DIR = fileURLToPath(new URL("../../shared-protocol/boards/", import.meta.url));
export const BOARD_TS = fileURLToPath(new URL("../assembly/board.ts", import.meta.url));
/** The board the committed firmware image is built for. */
export const DEFAULT_BOARD = "reference";

/** A board file (the host's type of it: the simulator reads the same files). */
export type BoardData = BoardProfile;

/** The board files beside the schema, by name. */
export function boardNames(): string[] {
  return readdirSync(BOARDS_DIR).filter((f) => f.endsWith(".json") && !f.endsWith(".schema.json")).map((f) => f.slice(0, -5)).sort();
}

type Validator = ((v: unknown) => boolean) & { errors?: { instancePath: string; message?: string }[] | null };
let validator: Validator | undefined;

/** Problems with a board file's content (empty when it is sound). */
export function boardProblems(value: unknown, fileName?: string): string[] {
  if (!validator) {
    // ajv is CommonJS: its class is the module's `default` export.
    const ajv = new ajvModule.default({ strict: true, allErrors: true });
    validator = ajv.compile(JSON.parse(readFileSync(`${BOARDS_DIR}board.schema.json`, "utf8"))) as Validator;
  }
  if (!validator(value)) return (validator.errors ?? []).map((e) => `${e.instancePath || "(root)"} ${e.message}`);
  const b = value as BoardData;
  const problems: string[] = [];
  if (fileName !== undefined && b.name !== fileName) problems.push(`/name "${b.name}" differs from the file name "${fileName}"`);
  if (!(b.thresholds_v[0] > b.thresholds_v[1])) problems.push("/thresholds_v the rising threshold must lie above the falling one");
  const unit = b.simulated_unit;
  if (unit && unit.drive_ohm.length !== b.drives.length) problems.push(`/simulated_unit/drive_ohm has ${unit.drive_ohm.length} values for ${b.drives.length} drives`);
  if (unit && unit.tank_f.length !== b.tanks.length) problems.push(`/simulated_unit/tank_f has ${unit.tank_f.length} values for ${b.tanks.length} tanks`);
  // Every value must be exact in the firmware's integer unit, so the profile reads back unchanged.
  const exact = (path: string, v: number, unit: keyof typeof UNITS) => {
    try {
      fixed(v, UNITS[unit]);
    } catch {
      problems.push(`${path} ${v} is not a whole number of ${unit}`);
    }
  };
  exact("/supply_v", b.supply_v, "mV");
  exact("/clamp_v", b.clamp_v, "mV");
  b.thresholds_v.forEach((t, i) => exact(`/thresholds_v/${i}`, t, "µV"));
  exact("/comparator/noise_v", b.comparator.noise_v, "µV");
  exact("/comparator/noise_bw_hz", b.comparator.noise_bw_hz, "kHz");
  exact("/comparator/delay_rise_s", b.comparator.delay_rise_s, "ps");
  exact("/comparator/delay_fall_s", b.comparator.delay_fall_s, "ps");
  exact("/comparator/skew_u_s", b.comparator.skew_u_s, "ps");
  exact("/comparator/overdrive_v_s", b.comparator.overdrive_v_s, "fV·s");
  b.drives.forEach((d, i) => {
    exact(`/drives/${i}/ohm`, d.ohm, "mΩ");
    exact(`/drives/${i}/power_rating_w`, d.power_rating_w, "mW");
    exact(`/drives/${i}/energy_rating_j`, d.energy_rating_j, "µJ");
    exact(`/drives/${i}/thermal_time_constant_s`, d.thermal_time_constant_s, "µs");
  });
  b.tanks.forEach((t, i) => exact(`/tanks/${i}/nominal_f`, t.nominal_f, "pF"));
  return problems;
}

/** Reads and checks one board file; throws with every problem listed. */
export function loadBoard(name: string): BoardData {
  const path = `${BOARDS_DIR}${name}.json`;
  let value: unknown;
  try {
    value = JSON.parse(readFileSync(path, "utf8"));
  } catch (e) {
    throw new Error(`board "${name}": cannot read ${path} (${(e as Error).message}); the boards are ${boardNames().join(", ")}`);
  }
  const problems = boardProblems(value, name);
  if (problems.length > 0) throw new Error(`board "${name}" (${path}) breaks the board schema:\n  ${problems.join("\n  ")}`);
  return value as BoardData;
}

/** The firmware's integer units: how many of each make one SI unit. */
const UNITS = { mV: 1e3, "µV": 1e6, kHz: 1e-3, ps: 1e12, "fV·s": 1e15, "mΩ": 1e3, mW: 1e3, "µJ": 1e6, "µs": 1e6, pF: 1e12 } as const;

/** v in units of 1/scale, as an exact integer (the firmware's mV, µs, pF...). */
function fixed(v: number, scale: number): number {
  const n = Math.round(v * scale);
  if (Math.abs(v * scale - n) > 1e-6 * Math.max(1, Math.abs(n)) || !Number.isSafeInteger(n) || Math.abs(n) > 0x7fffffff) {
    throw new Error(`${v} is not a whole number of 1/${scale}`);
  }
  return n;
}

/** Text as comment lines of at most 100 characters. */
function wrap(text: string, prefix: string): string {
  const lines: string[] = [];
  let line = "";
  for (const word of text.split(/\s+/)) {
    if (line && prefix.length + line.length + 1 + word.length > 100) {
      lines.push(prefix + line);
      line = word;
    } else line = line ? `${line} ${word}` : word;
  }
  if (line) lines.push(prefix + line);
  return lines.join("\n");
}

const list = (values: number[]) => `[${values.join(", ")}]`;

/** The AssemblyScript source of firmware/assembly/board.ts for one board. */
export function boardSource(b: BoardData): string {
  const mhz = b.tick_hz / 1e6;
  const sourceLines = b.drives.map((d, i) => wrap(`${i}: ${d.ohm} ohm: ${d.source}`, " *   ")).join("\n");
  return `// Generated by firmware/tools/board-source.ts from shared-protocol/boards/${b.name}.json. Do not edit:
// change the board file and run npm run build -w firmware (docs/porting.md, "The board profile").
//
${wrap(b.description, "// ")}
//
// The firmware reads nothing else about the hardware. Values are nominal: the host's calibration
// measures the real ones.

/** Capture timer tick rate: ${+(1e9 / b.tick_hz).toPrecision(3)} ns resolution, a 2^30-tick window of ${(2 ** 30 / b.tick_hz).toFixed(1)} s. */
export const TICK_HZ: i32 = ${b.tick_hz};
export const TICKS_PER_US: i32 = ${mhz};
export const TICKS_PER_MS: i32 = ${mhz * 1000};

/** Supply feeding the drive resistors, and the flyback clamp's conduction voltage. */
export const SUPPLY_MV: i32 = ${fixed(b.supply_v, UNITS.mV)};
export const CLAMP_MV: i32 = ${fixed(b.clamp_v, UNITS.mV)};

/**
 * Drive resistors: value in milliohms, continuous power rating in mW, single-pulse energy rating
 * in µJ, thermal time constant in µs. The firmware derives each resistor's charge-time limit and
 * the rest between pulses from these (interlocks.ts), assuming the worst case: the whole supply
 * across the resistor (a shorted part).
 *
 * The rest follows the resistor makers' rule for repeated pulses: a pulse on a resistor that is
 * already warm counts as more energy the closer its mean dissipation is to the continuous rating
 * (E_equivalent = E / (1 - P_mean / P_rated), which must stay within the single-pulse rating,
 * with P_mean <= P_rated; Vishay Sfernice DTO25 datasheet, doc. 51054, "Repetitive or superimposed
 * pulses"). The firmware tracks that mean as a first-order thermal model, the heat in the resistor
 * decaying with the time constant below.
 *
 * A time constant is seldom a datasheet figure. The rule of bench practice is the single-pulse
 * rating over the continuous one: the time constant of a one-node model that meets both ratings
 * at once (from cold it takes one rated pulse; pulse after pulse it holds the continuous rating).
 * A longer one would let a burst of pulses count as one long pulse beyond the single-pulse rating.
 * Where this board's values come from:
${sourceLines}
 */
export const DRIVE_COUNT: i32 = ${b.drives.length};
export const DRIVE_MILLIOHM: StaticArray<i32> = ${list(b.drives.map((d) => fixed(d.ohm, UNITS["mΩ"])))};
export const DRIVE_POWER_MW: StaticArray<i32> = ${list(b.drives.map((d) => fixed(d.power_rating_w, UNITS.mW)))};
export const DRIVE_ENERGY_UJ: StaticArray<i32> = ${list(b.drives.map((d) => fixed(d.energy_rating_j, UNITS["µJ"])))};
export const DRIVE_TAU_US: StaticArray<i32> = ${list(b.drives.map((d) => fixed(d.thermal_time_constant_s, UNITS["µs"])))};
/** Longest charge time on any resistor: keeps the flyback energy and the wait bounded. */
export const MAX_CHARGE_US: i32 = ${b.max_charge_us};

/** Tank capacitors, nominal, in picofarads. */
export const TANK_COUNT: i32 = ${b.tanks.length};
export const TANK_PF: StaticArray<i32> = ${list(b.tanks.map((t) => fixed(t.nominal_f, UNITS.pF)))};

/** Comparator thresholds referred to the ring voltage, in microvolts (deliberately offset). */
export const THRESHOLD_RISING_UV: i32 = ${fixed(b.thresholds_v[0], UNITS["µV"])};
export const THRESHOLD_FALLING_UV: i32 = ${fixed(b.thresholds_v[1], UNITS["µV"])};

/**
 * Comparator timing beyond the thresholds, referred to the ring like them (docs/hardware.md,
 * "Comparator timing in the profile"); the host's analysis corrects edge times with them
 * (docs/method.md §2a). Nominal design values of the board:
 * - input noise: rms and first-order bandwidth of the noise the comparator decides on (its own
 *   input noise and the divider's, times the 4:1 divider);
 * - propagation delays of a low->high and a high->low output at large overdrive, and the standard
 *   uncertainty of their difference (the skew; calibration measures it);
 * - overdrive charge: the integrated overdrive, in femtovolt-seconds, after which the input stage
 *   switches (a ramp of slope S is sqrt(2 q / S) late).
 */
export const COMPARATOR_NOISE_UV: i32 = ${fixed(b.comparator.noise_v, UNITS["µV"])};
export const COMPARATOR_NOISE_BW_KHZ: i32 = ${fixed(b.comparator.noise_bw_hz, UNITS.kHz)};
export const COMPARATOR_DELAY_RISE_PS: i32 = ${fixed(b.comparator.delay_rise_s, UNITS.ps)};
export const COMPARATOR_DELAY_FALL_PS: i32 = ${fixed(b.comparator.delay_fall_s, UNITS.ps)};
export const COMPARATOR_SKEW_U_PS: i32 = ${fixed(b.comparator.skew_u_s, UNITS.ps)};
export const COMPARATOR_OVERDRIVE_FVS: i32 = ${fixed(b.comparator.overdrive_v_s, UNITS["fV·s"])};

/** Edge buffer size, timing limits. */
export const BUFFER_EDGES: i32 = ${b.buffer_edges};
export const MAX_TIMEOUT_MS: i32 = ${b.max_timeout_ms};
export const SETTLE_US: i32 = ${b.settle_us};

/** Self-test: how long the capture path listens with the switch open. */
export const SELF_TEST_US: i32 = ${b.self_test_us};
`;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const code = boardSource(loadBoard(DEFAULT_BOARD));
  if (process.argv.includes("--check")) {
    let current = "";
    try {
      current = readFileSync(BOARD_TS, "utf8");
    } catch {}
    if (current !== code) {
      process.stderr.write("board-source: firmware/assembly/board.ts is stale; run npm run build -w firmware\n");
      process.exit(1);
    }
  } else {
    writeFileSync(BOARD_TS, code);
  }
}
