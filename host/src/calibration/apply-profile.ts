// From a stored profile to what a measurement applies (AppliedCalibration, applied.ts), and what
// the uncertainty budget should say about the timebase. Pure.

import type { AppliedCalibration } from "./applied.ts";
import { CalibrationError } from "./errors.ts";
import type { CalibrationMethod, CalibrationProfile, TankEntry } from "./profile-schema.ts";
import { MAX_PROFILE_INDEX } from "./profile-store.ts";
import type { TimebaseKnowledge } from "./uncertainty-budget.ts";

/** Methods whose capacitance is 1/(w^2 L_ref): they carry the timebase error in force at the time. */
const TIMEBASE_BOUND_METHODS = new Set<CalibrationMethod>(["reference-inductor"]);

/**
 * Allowance for the crystal moving between calibration and use when a tank was calibrated on
 * the same timebase (ageing and temperature, ±5 ppm rectangular: common bench practice, no source).
 */
export const CRYSTAL_DRIFT_PPM = 5;

/**
 * The capacitance to apply for a tank today. A reference-inductor calibration measured
 * C = 1/(w_ref^2 L_ref) with w_ref read through the timebase correction p0 then in force; with
 * the correction p1 in force now, the same ring gives C (1 + p0)^2 / (1 + p1)^2.
 */
export function tankCapacitanceNow(t: TankEntry, timebase_ppm_now: number): { c_f: number; u_f: number } {
  if (!TIMEBASE_BOUND_METHODS.has(t.method)) return { c_f: t.c_f, u_f: t.u_f };
  const s = ((1 + t.timebase_ppm * 1e-6) / (1 + timebase_ppm_now * 1e-6)) ** 2;
  return { c_f: t.c_f * s, u_f: t.u_f * s };
}

export function appliedCalibration(profile: CalibrationProfile, source: string): AppliedCalibration {
  const ppm = profile.timebase?.ppm ?? 0;
  const n = Math.max(0, ...profile.tanks.map((t) => t.index + 1));
  // The array is sized by the highest index: bound it (profile-store refuses such files on reading).
  if (!(n <= MAX_PROFILE_INDEX + 1)) throw new CalibrationError("PROFILE_INVALID", `a calibrated tank index of ${n - 1} is beyond any board (0 to ${MAX_PROFILE_INDEX}); calibrate again`);
  const tanks: AppliedCalibration["tanks"] = new Array(n).fill(undefined);
  for (const t of profile.tanks) {
    const drift = TIMEBASE_BOUND_METHODS.has(t.method) ? { timebase_u_ppm: CRYSTAL_DRIFT_PPM / Math.sqrt(3) } : {};
    tanks[t.index] = { ...tankCapacitanceNow(t, ppm), ...drift, fixture_included: t.fixture_included !== false };
  }
  return {
    tanks,
    ...(profile.thresholds ? { thresholds_v: [profile.thresholds.thresholds_v[0], profile.thresholds.thresholds_v[1]] as [number, number] } : {}),
    ...(profile.timebase ? { timebase_ppm: ppm, timebase_u_ppm: profile.timebase.u_ppm } : {}),
    ...(profile.leads ? { leads: { l_h: profile.leads.l_h, u_h: profile.leads.u_h } } : {}),
    ...(profile.fixture ? { fixture: { c_f: profile.fixture.c_f, u_f: profile.fixture.u_f } } : {}),
    ...(profile.skew ? { comparator_skew: { skew_s: profile.skew.skew_s, u_s: profile.skew.u_skew_s } } : {}),
    source,
  };
}

/**
 * What is known about the timebase for a reading on `tank`. A tank calibrated against a
 * reference inductor on this tester absorbed the crystal's error (L = L_ref w_ref^2 / w^2: the
 * tick rate cancels), so only drift since then remains; otherwise the timebase calibration's
 * uncertainty, or nothing (the analysis default applies).
 */
export function timebaseKnowledge(profile: CalibrationProfile | null, tank: number): TimebaseKnowledge | undefined {
  const t = profile?.tanks.find((e) => e.index === tank);
  if (t && TIMEBASE_BOUND_METHODS.has(t.method)) {
    return { u_rel: (CRYSTAL_DRIFT_PPM * 1e-6) / Math.sqrt(3), note: `cancels against the reference calibration; ±${CRYSTAL_DRIFT_PPM} ppm drift allowed` };
  }
  if (profile?.timebase) return { u_rel: profile.timebase.u_ppm * 1e-6, note: `calibrated timebase (${profile.timebase.method})` };
  return undefined;
}

/** Standard relative uncertainty of the timebase shared by two rings (the two-tank method). */
export function sharedTimebaseURel(profile: CalibrationProfile | null, tanks: number[], analysisDefault: number): number {
  // Both tanks against a reference on this timebase: C_i carries 1/tau^2 like 1/w_i^2, so tau cancels in L.
  const bound = tanks.every((i) => { const t = profile?.tanks.find((e) => e.index === i); return t && TIMEBASE_BOUND_METHODS.has(t.method); });
  if (bound) return (CRYSTAL_DRIFT_PPM * 1e-6) / Math.sqrt(3);
  if (profile?.timebase) return profile.timebase.u_ppm * 1e-6;
  return analysisDefault;
}
