// The calibration change check: a new tank calibration is compared with the one it replaces and,
// for a tank never calibrated, with the nominal value; a change larger than chance and tolerance
// explain is held for the user to confirm (a reference entered 3 % off moves every tank by 3 %,
// and every later reading with it). Pure.
//
// Limits, per tank:
// - against the previous calibration: k = 3 times the standard uncertainty of the difference,
//   u_d = hypot(u_prev, u_new) (independent: conservative where both share a reference), so a
//   repeat with the same reference passes and a shift beyond both calibrations' U does not;
// - against the nominal value: the tanks' tolerance (±1 %, C0G/film, nominal-uncertainty.ts) plus
//   k = 3 times the combined standard uncertainty of the new value and of what an effective
//   capacitance holds above the capacitor (fixture and switch node, and the reference's own Cs
//   when not stated: 10 pF standard each, ranging/unaccounted-capacitance.ts), so the 1 nF tank,
//   some 2 % above nominal on the reference board from its strays alone, passes.

import { NOMINAL_TANK_TOLERANCE } from "../nominal-uncertainty.ts";
import { SELF_CAPACITANCE_U_F, UNCALIBRATED_STRAY_U_F } from "../ranging/unaccounted-capacitance.ts";
import { tankCapacitanceNow } from "./apply-profile.ts";
import type { TankEntry } from "./profile-schema.ts";

/** Coverage of the change limits (JCGM 100:2008 §6.3: k = 3 is beyond chance for a normal difference). */
export const CHANGE_K = 3;

export interface TankChange {
  tank: number;
  against: "previous" | "nominal";
  /** The value compared with (the previous calibration as applied now, or nominal), farads. */
  before_f: number;
  after_f: number;
  /** after / before − 1. */
  change_rel: number;
  /** The limit |change_rel| is held against. */
  limit_rel: number;
  large: boolean;
}

/**
 * Each new entry against the entry it replaces in `previous` (both as applied with the timebase
 * correction in force now), else against its nominal value.
 */
export function calibrationChanges(entries: TankEntry[], previous: TankEntry[], timebase_ppm_now: number): TankChange[] {
  return entries.map((e) => {
    const after = tankCapacitanceNow(e, timebase_ppm_now);
    const old = previous.find((p) => p.index === e.index);
    if (old) {
      const before = tankCapacitanceNow(old, timebase_ppm_now);
      const change = after.c_f / before.c_f - 1;
      const limit = (CHANGE_K * Math.hypot(before.u_f, after.u_f)) / before.c_f;
      return { tank: e.index, against: "previous", before_f: before.c_f, after_f: after.c_f, change_rel: change, limit_rel: limit, large: Math.abs(change) > limit };
    }
    const change = after.c_f / e.nominal_f - 1;
    const limit = NOMINAL_TANK_TOLERANCE + (CHANGE_K * Math.hypot(after.u_f, UNCALIBRATED_STRAY_U_F, SELF_CAPACITANCE_U_F)) / e.nominal_f;
    return { tank: e.index, against: "nominal", before_f: e.nominal_f, after_f: after.c_f, change_rel: change, limit_rel: limit, large: Math.abs(change) > limit };
  });
}

/** One line per large change, for the prompt and the refusal. */
export function describeChanges(changes: TankChange[]): string {
  return changes.filter((c) => c.large).map((c) =>
    `tank ${c.tank} ${c.change_rel >= 0 ? "+" : "−"}${Math.abs(c.change_rel * 100).toFixed(2)} % from its ${c.against === "previous" ? "previous calibration" : "nominal value"} (limit ±${(c.limit_rel * 100).toFixed(2)} %)`,
  ).join("; ");
}
