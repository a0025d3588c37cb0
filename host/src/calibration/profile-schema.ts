// Calibration profile, version 1: what calibration found about one tester, per device id.
// JSON with units in the key names. Validation names the first bad field, so a hand-edited or
// damaged file is refused with a message that says where it went wrong.

import { CalibrationError } from "./errors.ts";

export const PROFILE_FORMAT = "henrytick-calibration";
export const PROFILE_VERSION = 1;

/** How a value was obtained, and when: kept with each value so a user can judge it later. */
export interface Provenance {
  /** Procedure name: reference-inductor, parallel-capacitor, threshold-fit, timebase-ticks, entered. */
  method: string;
  /** ISO 8601 time of the procedure. */
  time: string;
  /** One line: the reference used, the settings, the readings it rests on. */
  detail: string;
}

export interface TankEntry extends Provenance {
  index: number;
  nominal_f: number;
  /** Effective capacitance across the part: tank + fixture + strays, without the part's own Cs. */
  c_f: number;
  /** Standard uncertainty of c_f. */
  u_f: number;
  /** Part of u_f/c_f shared by every tank calibrated against the same reference (relative). */
  shared_u_rel: number;
  /** Part of u_f shared by every tank as an additive offset (the reference's stated Cs), F. */
  shared_offset_u_f?: number;
  /** Timebase correction (ppm) in force when c_f was measured; c_f is rescaled if it changes. */
  timebase_ppm: number;
  /**
   * Drive resistor used while calibrating. The switch node's capacitance reaches the tank through
   * the drive resistor, so the effective capacitance moves slightly with it (most on small tanks);
   * procedures that choose their own drive prefer this one.
   */
  drive?: number;
}

export interface ThresholdEntry extends Provenance {
  /** Rising/falling threshold ratio found by the fit (negative: thresholds straddle zero). */
  ratio: number;
  u_ratio: number;
  /** Thresholds to apply, [rising, falling], volts: the nominal hysteresis split at the fitted ratio. */
  thresholds_v: [number, number];
}

export interface TimebaseEntry extends Provenance {
  /** The tick counter runs fast by ppm: true rate = nominal (1 + ppm 1e-6). */
  ppm: number;
  u_ppm: number;
}

export interface CalibrationProfile {
  format: typeof PROFILE_FORMAT;
  version: typeof PROFILE_VERSION;
  device_id: string;
  /** ISO 8601 time of the last change. */
  updated: string;
  tanks: TankEntry[];
  thresholds?: ThresholdEntry;
  timebase?: TimebaseEntry;
}

export function emptyProfile(device_id: string, now: Date): CalibrationProfile {
  return { format: PROFILE_FORMAT, version: PROFILE_VERSION, device_id, updated: now.toISOString(), tanks: [] };
}

function bad(field: string, what: string): never {
  throw new CalibrationError("PROFILE_INVALID", `calibration profile field "${field}": ${what}; restore the previous profile ("henrytick calibrate restore") or calibrate again`);
}

type Obj = Record<string, unknown>;

function object(v: unknown, field: string): Obj {
  if (typeof v !== "object" || v === null || Array.isArray(v)) bad(field, "must be an object");
  return v as Obj;
}

function num(o: Obj, key: string, path: string, rule: "positive" | "nonneg" | "any"): number {
  const v = o[key];
  if (typeof v !== "number" || !Number.isFinite(v)) bad(path + key, `must be a finite number, got ${JSON.stringify(v) ?? "nothing"}`);
  if (rule === "positive" && !(v > 0)) bad(path + key, `must be positive, got ${v}`);
  if (rule === "nonneg" && !(v >= 0)) bad(path + key, `must not be negative, got ${v}`);
  return v;
}

function text(o: Obj, key: string, path: string): string {
  const v = o[key];
  if (typeof v !== "string" || v.length === 0) bad(path + key, "must be a non-empty string");
  return v;
}

function time(o: Obj, key: string, path: string): string {
  const v = text(o, key, path);
  if (Number.isNaN(Date.parse(v))) bad(path + key, `must be an ISO 8601 time, got ${JSON.stringify(v)}`);
  return v;
}

function provenance(o: Obj, path: string): Provenance {
  return { method: text(o, "method", path), time: time(o, "time", path), detail: typeof o.detail === "string" ? o.detail : "" };
}

function tankEntry(v: unknown, i: number, seen: Set<number>): TankEntry {
  const path = `tanks[${i}].`;
  const o = object(v, `tanks[${i}]`);
  const index = num(o, "index", path, "nonneg");
  if (!Number.isInteger(index)) bad(path + "index", `must be an integer tank index, got ${index}`);
  if (seen.has(index)) bad(path + "index", `tank ${index} appears twice`);
  seen.add(index);
  const e: TankEntry = {
    index,
    nominal_f: num(o, "nominal_f", path, "positive"),
    c_f: num(o, "c_f", path, "positive"),
    u_f: num(o, "u_f", path, "nonneg"),
    shared_u_rel: o.shared_u_rel === undefined ? 0 : num(o, "shared_u_rel", path, "nonneg"),
    timebase_ppm: o.timebase_ppm === undefined ? 0 : num(o, "timebase_ppm", path, "any"),
    ...(o.drive !== undefined ? { drive: num(o, "drive", path, "nonneg") } : {}),
    ...(o.shared_offset_u_f !== undefined ? { shared_offset_u_f: num(o, "shared_offset_u_f", path, "nonneg") } : {}),
    ...provenance(o, path),
  };
  if (e.drive !== undefined && !Number.isInteger(e.drive)) bad(path + "drive", `must be an integer drive index, got ${e.drive}`);
  // A calibrated tank far from its nominal value is a mix-up (wrong index, wrong unit), not a tolerance.
  if (e.c_f < 0.5 * e.nominal_f || e.c_f > 2 * e.nominal_f) bad(path + "c_f", `${e.c_f} F is not within a factor 2 of the nominal ${e.nominal_f} F`);
  if (e.u_f > 0.2 * e.c_f) bad(path + "u_f", `${e.u_f} F is over 20 % of c_f: not a calibration`);
  return e;
}

function thresholdEntry(v: unknown): ThresholdEntry {
  const path = "thresholds.";
  const o = object(v, "thresholds");
  const tv = o.thresholds_v;
  if (!Array.isArray(tv) || tv.length !== 2 || !tv.every((x) => typeof x === "number" && Number.isFinite(x))) {
    bad(path + "thresholds_v", "must be [rising, falling], two finite numbers of volts");
  }
  if (!(tv[0] > tv[1])) bad(path + "thresholds_v", `rising (${tv[0]}) must be above falling (${tv[1]})`);
  return { ratio: num(o, "ratio", path, "any"), u_ratio: num(o, "u_ratio", path, "nonneg"), thresholds_v: [tv[0], tv[1]], ...provenance(o, path) };
}

function timebaseEntry(v: unknown): TimebaseEntry {
  const path = "timebase.";
  const o = object(v, "timebase");
  const ppm = num(o, "ppm", path, "any");
  // A crystal off by more than 0.1 % is broken or the measurement was; either way do not apply it.
  if (Math.abs(ppm) > 1000) bad(path + "ppm", `${ppm} ppm is beyond any working crystal (|ppm| <= 1000)`);
  return { ppm, u_ppm: num(o, "u_ppm", path, "nonneg"), ...provenance(o, path) };
}

/** Checks a parsed profile; throws CalibrationError naming the first bad field. */
export function validateProfile(raw: unknown): CalibrationProfile {
  const o = object(raw, "(root)");
  if (o.format !== PROFILE_FORMAT) bad("format", `must be "${PROFILE_FORMAT}", got ${JSON.stringify(o.format) ?? "nothing"}`);
  if (typeof o.version !== "number" || !Number.isInteger(o.version)) bad("version", "must be an integer");
  if (o.version !== PROFILE_VERSION) {
    throw new CalibrationError(
      "PROFILE_VERSION",
      `calibration profile field "version": ${o.version} is not readable by this build (reads ${PROFILE_VERSION}); ` +
        (o.version > PROFILE_VERSION ? "update henrytick, or " : "") + 'restore the previous profile ("henrytick calibrate restore") or calibrate again',
    );
  }
  const device_id = text(o, "device_id", "");
  const updated = time(o, "updated", "");
  if (!Array.isArray(o.tanks)) bad("tanks", "must be an array (empty when no tank is calibrated)");
  const seen = new Set<number>();
  const tanks = o.tanks.map((t, i) => tankEntry(t, i, seen));
  const p: CalibrationProfile = { format: PROFILE_FORMAT, version: PROFILE_VERSION, device_id, updated, tanks };
  if (o.thresholds !== undefined) p.thresholds = thresholdEntry(o.thresholds);
  if (o.timebase !== undefined) p.timebase = timebaseEntry(o.timebase);
  return p;
}
