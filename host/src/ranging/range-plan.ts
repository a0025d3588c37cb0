// First-order range planning (pure): predict what each drive-resistor x tank-capacitor setting
// would produce for a part of roughly known L and Rs, and pick the one giving the most usable
// edges inside the safety and capture limits. Formulas: measurement notes §1 and §7.

import type { DeviceProfile } from "../device/profile.ts";

export interface PartEstimate {
  l_h: number;
  /** Loss as a series resistance, if all of it were in series. */
  rs_ohm: number;
  /** The same loss as a parallel resistance (core loss), if all of it were in parallel. */
  rp_ohm?: number;
}

export interface SettingPrediction {
  drive: number;
  tank: number;
  charge_us: number;
  i0_a: number;
  peak_v: number;
  f_hz: number;
  ticks_per_period: number;
  q: number;
  /** Edges expected above the comparator thresholds: 2 (Q/pi) ln(A0/h). */
  usable_edges: number;
  /** Empty when the setting is allowed; otherwise why not. */
  refused: string;
}

export interface PlanLimits {
  /** Highest ring peak allowed, volts (never above the board's clamp). */
  max_peak_v: number;
  /** Fewest timer ticks per ring period for a sound fit. */
  min_ticks_per_period: number;
}

/** Safety default: stay below the 42.4 V peak hazardous-live level of IEC 61010-1 (from memory). */
export const DEFAULT_MAX_PEAK_V = 30;

export function defaultLimits(profile: DeviceProfile): PlanLimits {
  return { max_peak_v: Math.min(DEFAULT_MAX_PEAK_V, 0.8 * profile.clamp_v), min_ticks_per_period: 40 };
}

export function predictSetting(profile: DeviceProfile, est: PartEstimate, drive: number, tank: number, limits: PlanLimits): SettingPrediction {
  const r = profile.drives[drive];
  const c = profile.tanks[tank].nominal_f;
  const loop = r.ohm + est.rs_ohm;
  // While the switch is closed the part and its tank form a parallel tank fed through R: the
  // current rises with L/R but also rings about its final value, decaying at Rs/2L + 1/2RC.
  // Charge until both have settled; if the interlock cuts the charge short, the ring may still
  // be on an overshoot, so the peak is predicted from the worst case, (1 + e^(-a t)) I_final.
  const tau_rise_us = (est.l_h / loop) * 1e6;
  const tau_ring_us = 1e6 / (est.rs_ohm / (2 * est.l_h) + 1 / (2 * r.ohm * c));
  const settle_us = 5 * Math.max(tau_rise_us, tau_ring_us);
  const charge_us = Math.max(2, Math.min(r.max_charge_us, Math.ceil(settle_us)));
  const i_final = profile.supply_v / loop;
  const i0 = charge_us >= settle_us
    ? i_final
    : i_final * Math.max(1 - Math.exp(-charge_us / tau_rise_us), 1 + Math.exp(-charge_us / tau_ring_us));
  const w0 = 1 / Math.sqrt(est.l_h * c);
  const z = Math.sqrt(est.l_h / c);
  // A probe cannot tell series from parallel (core) loss; they move Q in opposite directions
  // with the tank, so plan for the worse of the two.
  const q = Math.min(z / est.rs_ohm, est.rp_ohm !== undefined ? est.rp_ohm / z : Infinity);
  const alpha = w0 / (2 * q);
  // First peak a quarter period in, reduced by the decay over that quarter (notes §7).
  const peak = i0 * z * Math.exp((-alpha * Math.PI) / (2 * w0));
  const h = Math.max(Math.abs(profile.thresholds_v[0]), Math.abs(profile.thresholds_v[1]));
  const usable = peak > h ? 2 * (q / Math.PI) * Math.log(peak / h) : 0;
  const f = w0 / (2 * Math.PI);
  const tpp = profile.tick_hz / f;
  let refused = "";
  if (q <= 0.5) refused = "the part would not ring on this tank (overdamped)";
  else if (peak > limits.max_peak_v) refused = `predicted peak ${peak.toFixed(1)} V is above the ${limits.max_peak_v} V limit`;
  else if (tpp < limits.min_ticks_per_period) refused = `ring too fast for the timer (${tpp.toFixed(0)} ticks per period)`;
  else if (usable < 8) refused = "too few edges above the comparator thresholds";
  return { drive, tank, charge_us, i0_a: i0, peak_v: peak, f_hz: f, ticks_per_period: tpp, q, usable_edges: usable, refused };
}

/**
 * Edges beyond which more edges hardly help: the fit's share of u(L) is then far below the tank
 * capacitance's, so other qualities decide.
 */
export const TARGET_EDGES = 200;

/**
 * All settings, best first. Allowed settings come first; among them, more usable edges up to
 * TARGET_EDGES; then the largest tank (the part's self-capacitance and the fixture's stray
 * capacitance matter least against it); then the lowest ring peak.
 */
export function rankSettings(profile: DeviceProfile, est: PartEstimate, limits = defaultLimits(profile)): SettingPrediction[] {
  const all: SettingPrediction[] = [];
  for (let d = 0; d < profile.drives.length; d++) {
    for (let t = 0; t < profile.tanks.length; t++) all.push(predictSetting(profile, est, d, t, limits));
  }
  const edges = (p: SettingPrediction) => Math.min(p.usable_edges, TARGET_EDGES, profile.buffer_edges);
  const tankF = (p: SettingPrediction) => profile.tanks[p.tank].nominal_f;
  return all.sort((a, b) => {
    if ((a.refused === "") !== (b.refused === "")) return a.refused === "" ? -1 : 1;
    if (edges(a) !== edges(b)) return edges(b) - edges(a);
    if (tankF(a) !== tankF(b)) return tankF(b) - tankF(a);
    return a.peak_v - b.peak_v;
  });
}

/**
 * Rough L and Rs from a probe capture on a known setting: frequency from the median interval
 * between same-type edges, Q from how many cycles cleared the thresholds (inverting the
 * usable-edge formula above). Returns null when there are too few edges to say anything.
 */
export function estimateFromProbe(
  profile: DeviceProfile, drive: number, tank: number, charge_us: number, ticks: readonly number[], levels: readonly number[],
): PartEstimate | null {
  const rises: number[] = [];
  for (let i = 0; i < ticks.length; i++) if (levels[i] === 1) rises.push(ticks[i]);
  if (rises.length < 3) return null;
  const periods: number[] = [];
  for (let i = 1; i < rises.length; i++) periods.push(rises[i] - rises[i - 1]);
  periods.sort((a, b) => a - b);
  const period_s = periods[periods.length >> 1] / profile.tick_hz;
  const c = profile.tanks[tank].nominal_f;
  const w = (2 * Math.PI) / period_s;
  const l = 1 / (w * w * c);
  const z = Math.sqrt(l / c);
  const loop = profile.drives[drive].ohm;
  const i0 = (profile.supply_v / loop) * (1 - Math.exp((-charge_us * 1e-6 * loop) / l));
  const h = Math.max(Math.abs(profile.thresholds_v[0]), Math.abs(profile.thresholds_v[1]));
  const cycles = rises.length;
  const lnRatio = Math.log(Math.max((i0 * z) / h, 1.5));
  const q = Math.max(1, (Math.PI * cycles) / lnRatio);
  return { l_h: l, rs_ohm: z / q, rp_ohm: z * q };
}
