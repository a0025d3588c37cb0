// Advice: every setting of the profile predicted, the allowed ones ranked by the uncertainty of
// L they are expected to give (then of Q, then the gentler ring), each with its reason.

import type { DeviceProfile } from "../device/profile.ts";
import { formatSi } from "../format/si.ts";
import type { PartEstimate } from "./estimate.ts";
import type { PlanLimits, SettingPrediction, TankValue } from "./predict.ts";
import { predictSetting } from "./predict.ts";

export interface Advice extends SettingPrediction {
  /** One sentence: why this setting is where it is in the ranking. */
  reason: string;
}

/** Settings whose expected u(L) differs by less than this share are ranked by the next key. */
const TIE = 0.02;

export function adviseSettings(
  profile: DeviceProfile, est: PartEstimate, limits: PlanLimits, tanks?: (TankValue | undefined)[],
): Advice[] {
  const all: Advice[] = [];
  for (let d = 0; d < profile.drives.length; d++) {
    for (let t = 0; t < profile.tanks.length; t++) {
      const p = predictSetting(profile, est, d, t, limits, tanks?.[t]);
      all.push({ ...p, reason: reasonFor(p, profile) });
    }
  }
  return all.sort(compare);
}

function compare(a: Advice, b: Advice): number {
  if ((a.refused === "") !== (b.refused === "")) return a.refused === "" ? -1 : 1;
  if (a.refused !== "") return a.a0_v - b.a0_v;
  const ua = a.l_rel_u, ub = b.l_rel_u;
  if (Math.abs(ua - ub) > TIE * Math.min(ua, ub)) return ua - ub;
  if (Math.abs(a.q_rel_u - b.q_rel_u) > TIE * Math.min(a.q_rel_u, b.q_rel_u)) return a.q_rel_u - b.q_rel_u;
  return a.peak_v - b.peak_v;
}

function reasonFor(p: SettingPrediction, profile: DeviceProfile): string {
  const setting = `${formatSi(profile.drives[p.drive].ohm, "Ω", 3)} with ${formatSi(profile.tanks[p.tank].nominal_f, "F", 3)}`;
  if (p.refused) return `${setting}: refused, ${p.refused}.`;
  const b = p.l_budget;
  const top = (Object.entries(b) as [string, number][]).sort((x, y) => y[1] - x[1])[0][0];
  const limiting = { fit: "the ring's length", tank: "the tank capacitance", timebase: "the timebase", stray: "self- and stray capacitance" }[top];
  return `${setting}: about ${Math.round(p.usable_edges)} edges at ${p.peak_v.toFixed(1)} V peak, ` +
    `${Math.round(p.ticks_per_period)} ticks per period; expected u(L) ${(100 * p.l_rel_u).toFixed(2)} %, ` +
    `limited by ${limiting}; u(Q) ${(100 * p.q_rel_u).toFixed(1)} %.`;
}
