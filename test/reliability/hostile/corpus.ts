// The hostile corpus: capture files, paths and calibration profiles that are damaged or doctored
// in ways a real file never is, each built from a real capture of the simulated tester (the
// drawer choke, 331.5 µH) or a valid profile, with the code it must be refused with. Every case
// must end in a coded refusal: a number is a wrong result, anything else a crash, and a case that
// does not finish within its bound a hang. Used by hostile-inputs.test.ts and the bench.

import { spawnSync } from "node:child_process";
import { closeSync, ftruncateSync, mkdirSync, openSync, rmSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { MAX_CAPTURE_BYTES, MAX_CAPTURE_EDGES, readCaptureFile, serializeCapture, type CaptureV1 } from "../../../host/src/capture/capture-file.ts";
import { deviceCalibration } from "../../../host/src/calibration/device-calibration.ts";
import { CodedError } from "../../../host/src/coded-error.ts";
import { writeFileAtomic } from "../../../host/src/fs/atomic-write.ts";
import { measurePart } from "../../../host/src/measure/measure-part.ts";
import { analyzeCapture } from "../../../host/src/measure/read-once.ts";
import { openTester } from "../../../host/src/open-tester.ts";
import type { CalibrationProfile } from "../../../host/src/calibration/profile-schema.ts";

export type Edit = (c: CaptureV1) => CaptureV1;

export interface CaptureCase {
  name: string;
  class: "wrong-number" | "bounds";
  /** The edit applied to the base capture, or a path to read instead of a file. */
  edit?: Edit;
  path?: (dir: string) => string | null;
  /** Accepted refusal codes. */
  codes: string[];
}

export interface ProfileCase {
  name: string;
  edit: (p: CalibrationProfile) => CalibrationProfile;
  codes: string[];
}

const clone = (c: CaptureV1): CaptureV1 => JSON.parse(JSON.stringify(c));
const withEdges = (c: CaptureV1, f: (e: [number, number], i: number) => [number, number]): CaptureV1 => ({ ...clone(c), edges: c.edges.map((e, i) => f([e[0], e[1]], i)) });
const cal = (c: CaptureV1) => c.calibration!;

export const CAPTURE_CASES: CaptureCase[] = [
  // Levels: a comparator with hysteresis can only toggle.
  { name: "all edge levels 1", class: "wrong-number", edit: (c) => withEdges(c, ([t]) => [t, 1]), codes: ["EDGES_NOT_ALTERNATING"] },
  { name: "all edge levels 0", class: "wrong-number", edit: (c) => withEdges(c, ([t]) => [t, 0]), codes: ["EDGES_NOT_ALTERNATING"] },
  { name: "one level repeated mid-ring", class: "wrong-number", edit: (c) => withEdges(c, ([t, l], i) => [t, i === 40 ? c.edges[39][1] : l]), codes: ["EDGES_NOT_ALTERNATING"] },
  { name: "levels shifted by one from edge 100", class: "wrong-number", edit: (c) => withEdges(c, ([t, l], i) => [t, i >= 100 ? c.edges[i - 1][1] : l]), codes: ["EDGES_NOT_ALTERNATING"] },
  // Timer against the file's own nominal rate and stated error.
  { name: "tick_hz doubled, nominal kept", class: "wrong-number", edit: (c) => ({ ...clone(c), tick_hz: c.tick_hz * 2 }), codes: ["TICK_RATE_MISMATCH"] },
  { name: "tick_hz +0.1 %", class: "wrong-number", edit: (c) => ({ ...clone(c), tick_hz: c.tick_hz * 1.001 }), codes: ["TICK_RATE_MISMATCH"] },
  { name: "tick_hz halved", class: "wrong-number", edit: (c) => ({ ...clone(c), tick_hz: c.tick_hz / 2 }), codes: ["TICK_RATE_MISMATCH"] },
  { name: "timebase error 5000 ppm, consistent", class: "wrong-number", edit: (c) => ({ ...clone(c), tick_hz: cal(c).nominal_tick_hz * 1.005, calibration: { ...cal(c), timebase_ppm: 5000 } }), codes: ["TICK_RATE_IMPLAUSIBLE"] },
  { name: "tick_hz 1e15, no calibration record", class: "wrong-number", edit: (c) => { const o = clone(c); delete o.calibration; return { ...o, tick_hz: 1e15 }; }, codes: ["TICK_RATE_IMPLAUSIBLE"] },
  { name: "tick_hz 1 kHz, no calibration record", class: "wrong-number", edit: (c) => { const o = clone(c); delete o.calibration; return { ...o, tick_hz: 1e3 }; }, codes: ["TICK_RATE_IMPLAUSIBLE"] },
  // Tank against physical ranges and the file's own nominal.
  { name: "tank_c_f 1000 F", class: "wrong-number", edit: (c) => ({ ...clone(c), tank_c_f: 1000 }), codes: ["TANK_IMPLAUSIBLE"] },
  { name: "tank_c_f 1 fF", class: "wrong-number", edit: (c) => ({ ...clone(c), tank_c_f: 1e-15 }), codes: ["TANK_IMPLAUSIBLE"] },
  { name: "tank 3x its nominal, marked calibrated", class: "wrong-number", edit: (c) => ({ ...clone(c), tank_c_f: c.tank_c_f * 3, calibration: { ...cal(c), tank_calibrated: true } }), codes: ["TANK_IMPLAUSIBLE"] },
  { name: "tank 10 % off its nominal, marked uncalibrated", class: "wrong-number", edit: (c) => ({ ...clone(c), tank_c_f: c.tank_c_f * 1.1 }), codes: ["TANK_IMPLAUSIBLE"] },
  { name: "tank 1000 F with its nominal edited to match", class: "wrong-number", edit: (c) => ({ ...clone(c), tank_c_f: 1000, calibration: { ...cal(c), nominal_tank_c_f: 1000 } }), codes: ["TANK_IMPLAUSIBLE"] },
  // Ring amplitude implied by the thresholds against the drive and the clamp.
  { name: "thresholds x1000", class: "wrong-number", edit: (c) => ({ ...clone(c), thresholds_v: [c.thresholds_v[0] * 1000, c.thresholds_v[1] * 1000] }), codes: ["RING_AMPLITUDE_IMPLAUSIBLE"] },
  { name: "thresholds x10", class: "wrong-number", edit: (c) => ({ ...clone(c), thresholds_v: [c.thresholds_v[0] * 10, c.thresholds_v[1] * 10] }), codes: ["RING_AMPLITUDE_IMPLAUSIBLE"] },
  { name: "thresholds x1e6", class: "wrong-number", edit: (c) => ({ ...clone(c), thresholds_v: [c.thresholds_v[0] * 1e6, c.thresholds_v[1] * 1e6] }), codes: ["THRESHOLDS_IMPLAUSIBLE"] },
  { name: "thresholds x1000, drive record removed, clamp kept elsewhere", class: "wrong-number", edit: (c) => ({ ...clone(c), drive: { supply_v: 1e6, series_ohm: 1e-3, clamp_v: c.drive!.clamp_v }, thresholds_v: [c.thresholds_v[0] * 1000, c.thresholds_v[1] * 1000] }), codes: ["RING_AMPLITUDE_IMPLAUSIBLE"] },
  { name: "drive resistor x100", class: "wrong-number", edit: (c) => ({ ...clone(c), drive: { ...c.drive!, series_ohm: c.drive!.series_ohm * 100 } }), codes: ["RING_AMPLITUDE_IMPLAUSIBLE"] },
  { name: "clamp 0.5 V", class: "wrong-number", edit: (c) => ({ ...clone(c), drive: { ...c.drive!, clamp_v: 0.5 } }), codes: ["RING_AMPLITUDE_IMPLAUSIBLE"] },
  // Counts against what was asked for and what a capture holds.
  { name: "more edges than the stated edge limit", class: "wrong-number", edit: (c) => ({ ...clone(c), range: { ...c.range!, edge_limit: 100 } }), codes: ["TOO_MANY_EDGES"] },
  { name: "timer too slow to resolve the ring", class: "wrong-number", edit: (c) => { const o = withEdges(c, ([t, l]) => [Math.floor(t / 1000), l]); delete o.calibration; return { ...o, tick_hz: c.tick_hz / 1000 }; }, codes: ["RESULT_OUT_OF_RANGE", "NO_RING", "TOO_FEW_EDGES", "BAD_INPUT"] },
  // Bounds: what is read at all.
  { name: "/dev/zero", class: "bounds", path: () => "/dev/zero", codes: ["BAD_CAPTURE_FILE"] },
  { name: "/dev/urandom", class: "bounds", path: () => "/dev/urandom", codes: ["BAD_CAPTURE_FILE"] },
  { name: "a FIFO with no writer", class: "bounds", path: (dir) => { const p = join(dir, "fifo.json"); rmSync(p, { force: true }); return spawnSync("mkfifo", [p]).status === 0 ? p : null; }, codes: ["BAD_CAPTURE_FILE"] },
  { name: "a folder", class: "bounds", path: (dir) => { const p = join(dir, "folder.json"); mkdirSync(p, { recursive: true }); return p; }, codes: ["BAD_CAPTURE_FILE"] },
  { name: "a sparse file of 1 GiB", class: "bounds", path: (dir) => { const p = join(dir, "huge.json"); const fd = openSync(p, "w"); ftruncateSync(fd, 2 ** 30); closeSync(fd); return p; }, codes: ["BAD_CAPTURE_FILE"] },
  { name: "a file one byte over the size limit", class: "bounds", path: (dir) => { const p = join(dir, "over.json"); const fd = openSync(p, "w"); ftruncateSync(fd, MAX_CAPTURE_BYTES + 1); closeSync(fd); return p; }, codes: ["BAD_CAPTURE_FILE"] },
  { name: `${MAX_CAPTURE_EDGES + 1} edges`, class: "bounds", path: (dir) => {
    const edges: [number, number][] = [];
    for (let i = 0; i <= MAX_CAPTURE_EDGES; i++) edges.push([1000 + 10 * i, (i + 1) % 2]);
    const p = join(dir, "many-edges.json");
    writeFileSync(p, serializeCapture({ format: "henrytick-capture", version: 1, tick_hz: 64e6, tank_c_f: 1e-7, thresholds_v: [0.035, -0.005], edges }));
    return p;
  }, codes: ["BAD_CAPTURE_FILE"] },
  { name: "2 million edges", class: "bounds", path: (dir) => {
    const p = join(dir, "two-million.json");
    const parts: string[] = [];
    for (let i = 0; i < 2_000_000; i++) parts.push(`[${1000 + 10 * i},${(i + 1) % 2}]`);
    writeFileSync(p, `{"format":"henrytick-capture","version":1,"tick_hz":64000000,"tank_c_f":1e-7,"thresholds_v":[0.035,-0.005],"edges":[${parts.join(",")}]}`);
    return p;
  }, codes: ["BAD_CAPTURE_FILE"] },
];

/** Edits of a valid profile for the tester whose board reports tanks 1 nF, 10 nF, 100 nF, 1 µF. */
export const PROFILE_CASES: ProfileCase[] = [
  { name: "tank index 1e8", edit: (p) => ({ ...p, tanks: [{ ...p.tanks[0], index: 1e8 }] }), codes: ["PROFILE_INVALID"] },
  { name: "tank index 2^32", edit: (p) => ({ ...p, tanks: [{ ...p.tanks[0], index: 2 ** 32 }] }), codes: ["PROFILE_INVALID"] },
  { name: "tank index 2^53", edit: (p) => ({ ...p, tanks: [{ ...p.tanks[0], index: 2 ** 53 }] }), codes: ["PROFILE_INVALID"] },
  { name: "drive index 1e9", edit: (p) => ({ ...p, tanks: [{ ...p.tanks[0], drive: 1e9 }] }), codes: ["PROFILE_INVALID"] },
  { name: "tank index 7 on a four-tank board", edit: (p) => ({ ...p, tanks: [{ ...p.tanks[0], index: 7 }] }), codes: ["PROFILE_BOARD_MISMATCH"] },
  { name: "tank 2 said to be a 60 nF tank (board: 100 nF)", edit: (p) => ({ ...p, tanks: [{ ...p.tanks[0], nominal_f: 60e-9, c_f: 60e-9, u_f: 60e-12 }] }), codes: ["PROFILE_BOARD_MISMATCH"] },
  { name: "tank 2 calibrated at 70 nF (board: 100 nF)", edit: (p) => ({ ...p, tanks: [{ ...p.tanks[0], c_f: 70e-9, u_f: 70e-12 }] }), codes: ["PROFILE_BOARD_MISMATCH"] },
  { name: "tank 2 calibrated at 140 nF (board: 100 nF)", edit: (p) => ({ ...p, tanks: [{ ...p.tanks[0], c_f: 140e-9, u_f: 140e-12 }] }), codes: ["PROFILE_BOARD_MISMATCH"] },
];

/** A valid profile for `device_id` calibrating tank 2 (100 nF) at +1 %. */
export function baseProfile(device_id: string): CalibrationProfile {
  const time = "2026-01-01T00:00:00.000Z";
  return {
    format: "henrytick-calibration", version: 1, device_id, updated: time,
    tanks: [{ index: 2, nominal_f: 100e-9, c_f: 101e-9, u_f: 0.1e-9, shared_u_rel: 0, timebase_ppm: 0, method: "entered", time, detail: "hostile corpus base" }],
  };
}

// ---- running the cases ----


export type Outcome =
  | { kind: "refused"; code: string; message: string }
  | { kind: "number"; inductance_h: number }
  | { kind: "crash"; error: string }
  | { kind: "hang"; error: string }
  | { kind: "skipped"; error: string };

const CLI = fileURLToPath(new URL("../../../host/bin/henrytick.js", import.meta.url));
/** Bound on one CLI run of a path case: far above the 0.2 s they take, far below a hang. */
export const PATH_CASE_TIMEOUT_MS = 30_000;

function fromError(e: unknown): Outcome {
  if (e instanceof CodedError) return { kind: "refused", code: e.code, message: e.message };
  return { kind: "crash", error: `${(e as Error)?.name}: ${(e as Error)?.message}` };
}

/** An edited capture written to a file and read and analysed as `analyze` does. */
export function runEditCase(c: CaptureCase, base: CaptureV1, dir: string): Outcome {
  const file = join(dir, `${c.name.replace(/[^A-Za-z0-9]+/g, "-")}.json`);
  try {
    writeFileAtomic(file, serializeCapture(c.edit!(base)));
    const a = analyzeCapture(readCaptureFile(file));
    return { kind: "number", inductance_h: a.inductance_h };
  } catch (e) {
    return fromError(e);
  }
}

/** A path case through the built CLI in its own process (a hang or a blow-up cannot stop the caller). */
export function runPathCase(c: CaptureCase, dir: string, env: Record<string, string | undefined> = process.env): Outcome {
  const path = c.path!(dir);
  if (path === null) return { kind: "skipped", error: "could not create the input (mkfifo missing?)" };
  const r = spawnSync(process.execPath, ["--max-old-space-size=512", CLI, "analyze", path, "--json"], { encoding: "utf8", timeout: PATH_CASE_TIMEOUT_MS, env });
  if (r.error && (r.error as NodeJS.ErrnoException).code === "ETIMEDOUT") return { kind: "hang", error: `no end within ${PATH_CASE_TIMEOUT_MS} ms` };
  const m = /\[([A-Z_]+)\] (.*)/.exec(r.stderr);
  if (r.status === 1 && m) return { kind: "refused", code: m[1], message: m[2] };
  if (r.status === 0) {
    try {
      return { kind: "number", inductance_h: JSON.parse(r.stdout).inductance_h };
    } catch {
      return { kind: "crash", error: `exit 0 without a result: ${r.stdout.slice(0, 200)}` };
    }
  }
  return { kind: "crash", error: `exit ${r.status ?? r.signal}: ${r.stderr.slice(0, 300)}` };
}

/** A profile case: the edited profile written where the store looks (bypassing saveProfile's checks). */
export function writeProfileCase(c: ProfileCase, device_id: string, dir: string): string {
  mkdirSync(dir, { recursive: true });
  const file = join(dir, `calibration-${device_id.replace(/[^A-Za-z0-9_-]/g, "_")}.json`);
  writeFileAtomic(file, JSON.stringify(c.edit(baseProfile(device_id)), null, 2) + "\n");
  return file;
}

export { fromError as outcomeOf };

// ---- the whole corpus, for the bench ----


export interface CorpusTally {
  tried: number;
  refused: number;
  /** A number returned for a case that must be refused. */
  wrong_numbers: number;
  crashes: number;
  hangs: number;
  skipped: number;
  /** A refusal with a code other than the case's own. */
  other_code: number;
  codes: Record<string, number>;
  samples: string[];
}

/** Runs every capture, path and profile case once. */
export async function runHostileCorpus(dir: string): Promise<CorpusTally> {
  const tally: CorpusTally = { tried: 0, refused: 0, wrong_numbers: 0, crashes: 0, hangs: 0, skipped: 0, other_code: 0, codes: {}, samples: [] };
  const note = (name: string, codes: string[], o: Outcome) => {
    tally.tried++;
    if (o.kind === "refused") {
      tally.refused++;
      tally.codes[o.code] = (tally.codes[o.code] ?? 0) + 1;
      if (!codes.includes(o.code)) {
        tally.other_code++;
        tally.samples.push(`${name}: ${o.code} (expected ${codes.join("/")})`);
      }
    } else {
      if (o.kind === "number") tally.wrong_numbers++;
      else if (o.kind === "crash") tally.crashes++;
      else if (o.kind === "hang") tally.hangs++;
      else tally.skipped++;
      tally.samples.push(`${name}: ${JSON.stringify(o)}`);
    }
  };
  const t = await openTester({ scenario: "drawer-choke-330u", seed: 1 });
  try {
    const base = (await measurePart(t.client)).capture;
    for (const c of CAPTURE_CASES) note(c.name, c.codes, c.edit ? runEditCase(c, base, dir) : runPathCase(c, dir));
    for (const c of PROFILE_CASES) {
      const store = join(dir, `profile-${c.name.replace(/[^A-Za-z0-9]+/g, "-")}`);
      writeProfileCase(c, t.client.identity.device_id, store);
      let o: Outcome;
      try {
        deviceCalibration(t.client, { dir: store });
        o = { kind: "number", inductance_h: NaN }; // accepted: measure would apply it
      } catch (e) {
        o = fromError(e);
      }
      note(`profile: ${c.name}`, c.codes, o);
    }
  } finally {
    await t.close();
  }
  return tally;
}
