// Calibration profile, version 1: what calibration found about one tester, per device id.
// JSON with units in the key names. Validation names the first bad field, so a hand-edited or
// damaged file is refused with a message that says where it went wrong.

import { schemaProblem } from "../schemas.ts";
import { CalibrationError } from "./errors.ts";

export const PROFILE_FORMAT = "henrytick-calibration";
export const PROFILE_VERSION = 1;

/**
 * The procedures a profile value can come from: a reference inductor, a coil rung without and
 * with a known capacitor, the comparator threshold fit, the comparator skew fit, the crystal
 * timed against the host's clock, a value entered by hand (e.g. a crystal error from a
 * frequency counter), the ring of the test leads with their clips shorted together, or one coil
 * rung on two tanks on the board's own terminals and then on the clips (open nulling).
 */
export const CALIBRATION_METHODS = ["reference-inductor", "parallel-capacitor", "threshold-fit", "skew-fit", "host-clock", "entered", "clips-shorted", "terminals-vs-clips"] as const;
export type CalibrationMethod = (typeof CALIBRATION_METHODS)[number];

/** How a value was obtained, and when: kept with each value so a user can judge it later. */
export interface Provenance {
  method: CalibrationMethod;
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
  /**
   * False when the tank was calibrated on the board's own terminals, without the clips and leads:
   * readings then add the fixture's capacitance (profile.fixture). True or left out: calibrated
   * through the clips, so c_f already holds the fixture and nothing is added.
   */
  fixture_included?: boolean;
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

/** The test leads' own series inductance (clips shorted): subtracted from every reading. */
export interface LeadEntry extends Provenance {
  /** Series inductance of the leads and clips, henries. */
  l_h: number;
  /** Standard uncertainty of l_h. */
  u_h: number;
}

/** Largest lead inductance a profile accepts: above it the clips were not shorted (as SHORT_MAX_L_H). */
export const MAX_LEAD_H = 0.5e-6;

/**
 * The clips' and leads' own capacitance across the part (open nulling, open-nulling.ts): added to
 * each tank whose value does not hold it (an uncalibrated tank, or one calibrated on the terminals).
 */
export interface FixtureEntry extends Provenance {
  /** Capacitance of the fixture across the part, farads (a small negative value is a null within its u). */
  c_f: number;
  /** Standard uncertainty of c_f. */
  u_f: number;
}

/** Largest fixture capacitance a profile accepts: beyond it a part or a capacitor was left on the clips. */
export const MAX_FIXTURE_F = 500e-12;

export interface SkewEntry extends Provenance {
  /** The comparator's rising-edge propagation delay minus its falling-edge delay, seconds. */
  skew_s: number;
  /** Standard uncertainty of skew_s, seconds. */
  u_skew_s: number;
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
  leads?: LeadEntry;
  skew?: SkewEntry;
  fixture?: FixtureEntry;
}

export function emptyProfile(device_id: string, now: Date): CalibrationProfile {
  return { format: PROFILE_FORMAT, version: PROFILE_VERSION, device_id, updated: now.toISOString(), tanks: [] };
}

function bad(field: string, what: string): never {
  throw new CalibrationError("PROFILE_INVALID", `calibration profile field "${field}": ${what}; restore the previous profile ("henrytick calibrate restore") or calibrate again`);
}

type Obj = Record<string, unknown>;

function tankEntry(o: Obj, i: number, seen: Set<number>): TankEntry {
  const path = `tanks[${i}].`;
  const e = { ...o, shared_u_rel: o.shared_u_rel ?? 0, timebase_ppm: o.timebase_ppm ?? 0, detail: o.detail ?? "" } as unknown as TankEntry;
  if (seen.has(e.index)) bad(path + "index", `tank ${e.index} appears twice`);
  seen.add(e.index);
  // A calibrated tank far from its nominal value is a mix-up (wrong index, wrong unit), not a tolerance.
  if (e.c_f < 0.5 * e.nominal_f || e.c_f > 2 * e.nominal_f) bad(path + "c_f", `${e.c_f} F is not within a factor 2 of the nominal ${e.nominal_f} F`);
  if (e.u_f > 0.2 * e.c_f) bad(path + "u_f", `${e.u_f} F is over 20 % of c_f: not a calibration`);
  return e;
}

function thresholdEntry(o: Obj): ThresholdEntry {
  const e = { ...o, detail: o.detail ?? "" } as unknown as ThresholdEntry;
  const tv = e.thresholds_v;
  if (!(tv[0] > tv[1])) bad("thresholds.thresholds_v", `rising (${tv[0]}) must be above falling (${tv[1]})`);
  return e;
}

function timebaseEntry(o: Obj): TimebaseEntry {
  const e = { ...o, detail: o.detail ?? "" } as unknown as TimebaseEntry;
  // A crystal off by more than 0.1 % is broken or the measurement was; either way do not apply it.
  if (Math.abs(e.ppm) > 1000) bad("timebase.ppm", `${e.ppm} ppm is beyond any working crystal (|ppm| <= 1000)`);
  return e;
}

function leadEntry(o: Obj): LeadEntry {
  const e = { ...o, detail: o.detail ?? "" } as unknown as LeadEntry;
  if (e.l_h > MAX_LEAD_H) bad("leads.l_h", `${e.l_h} H is more than shorted clips and leads show (at most ${MAX_LEAD_H} H)`);
  if (e.u_h > Math.max(0.5 * e.l_h, 1e-9)) bad("leads.u_h", `${e.u_h} H is over half of l_h: not a calibration`);
  return e;
}

function fixtureEntry(o: Obj): FixtureEntry {
  const e = { ...o, detail: o.detail ?? "" } as unknown as FixtureEntry;
  if (!(Math.abs(e.c_f) <= MAX_FIXTURE_F)) bad("fixture.c_f", `${e.c_f} F is more than clips and leads hold (at most ${MAX_FIXTURE_F} F)`);
  if (e.u_f > Math.max(0.5 * Math.abs(e.c_f), 1e-12)) bad("fixture.u_f", `${e.u_f} F is over half of c_f: not a calibration`);
  return e;
}

function skewEntry(o: Obj): SkewEntry {
  const e = { ...o, detail: o.detail ?? "" } as unknown as SkewEntry;
  // A comparator whose rise and fall delays differ by a microsecond is not a comparator: a mix-up
  // of units, or a procedure that went wrong.
  if (!(Math.abs(e.skew_s) < 1e-6)) bad("skew.skew_s", `${e.skew_s} s is beyond any working comparator (|skew| < 1 µs)`);
  return e;
}

/**
 * Checks a parsed profile (its shape by schemas/calibration-profile.schema.json, then the rules a
 * schema cannot state); throws CalibrationError naming the first bad field. Optional numbers left
 * out read as 0, a missing detail as "".
 */
export function validateProfile(raw: unknown): CalibrationProfile {
  if (typeof raw !== "object" || raw === null || Array.isArray(raw)) bad("(root)", "must be an object");
  const o = raw as Obj;
  if (typeof o.version === "number" && Number.isInteger(o.version) && o.version !== PROFILE_VERSION && o.format === PROFILE_FORMAT) {
    throw new CalibrationError(
      "PROFILE_VERSION",
      `calibration profile field "version": ${o.version} is not readable by this build (reads ${PROFILE_VERSION}); ` +
        (o.version > PROFILE_VERSION ? "update henrytick, or " : "") + 'restore the previous profile ("henrytick calibrate restore") or calibrate again',
    );
  }
  const problem = schemaProblem("calibration-profile", raw);
  if (problem) bad(problem.field, problem.message);
  const seen = new Set<number>();
  const p: CalibrationProfile = {
    format: PROFILE_FORMAT, version: PROFILE_VERSION, device_id: o.device_id as string, updated: o.updated as string,
    tanks: (o.tanks as Obj[]).map((t, i) => tankEntry(t, i, seen)),
  };
  if (o.thresholds !== undefined) p.thresholds = thresholdEntry(o.thresholds as Obj);
  if (o.timebase !== undefined) p.timebase = timebaseEntry(o.timebase as Obj);
  if (o.leads !== undefined) p.leads = leadEntry(o.leads as Obj);
  if (o.skew !== undefined) p.skew = skewEntry(o.skew as Obj);
  if (o.fixture !== undefined) p.fixture = fixtureEntry(o.fixture as Obj);
  return p;
}
