// What is known about the part before choosing a setting: a rough estimate from a gentle probe
// (median period, cycles above the thresholds), or a fitted one from a full reading. Pure code.

import type { RingAnalysis } from "../analysis/index.ts";
import type { DeviceProfile } from "../device/profile.ts";

export interface PartEstimate {
  l_h: number;
  /** Q measured on known tank capacitances (one per tank measured so far). */
  q_points: { q: number; tank_f: number }[];
  /** A measured initial ring amplitude on a known setting: predictions scale from it. */
  anchor?: { drive: number; tank: number; charge_us: number; a0_v: number };
  /** Timing and voltage noise seen at the comparator. */
  noise?: { sigma_t_s: number; sigma_v_v: number };
  /** True when the estimate comes from a full fit, false for a rough probe. */
  fitted: boolean;
}

/**
 * Rough L and Q from a probe capture on a known setting: frequency from the median interval
 * between rising edges, Q from how many cycles cleared the thresholds, inverting
 * cycles = (Q / pi) ln(A0 / h) with A0 predicted from the drive current. Null when fewer than
 * three rising edges arrived.
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
  const r = profile.drives[drive].ohm;
  const i0 = (profile.supply_v / r) * (1 - Math.exp((-charge_us * 1e-6 * r) / l));
  const h = thresholdScale(profile);
  const lnRatio = Math.log(Math.max((i0 * z) / h, 1.5));
  const q = Math.max(0.6, (Math.PI * rises.length) / lnRatio);
  return { l_h: l, q_points: [{ q, tank_f: c }], fitted: false };
}

/** A fitted estimate from a full reading on a known setting. */
export function estimateFromReading(
  profile: DeviceProfile, s: { drive: number; tank: number; charge_us: number }, a: RingAnalysis,
): PartEstimate {
  return {
    l_h: a.inductance_h,
    q_points: [{ q: a.q, tank_f: profile.tanks[s.tank].nominal_f }],
    anchor: { drive: s.drive, tank: s.tank, charge_us: s.charge_us, a0_v: a.amplitude_v },
    noise: a.noise,
    fitted: true,
  };
}

/** The larger threshold magnitude: the ring counts as ended when it no longer clears it. */
export function thresholdScale(profile: DeviceProfile): number {
  return Math.max(Math.abs(profile.thresholds_v[0]), Math.abs(profile.thresholds_v[1]));
}

/**
 * Combines a new fitted reading with what was known: L, amplitude and noise from the newest;
 * Q points accumulated over tanks (a probe's rough Q included: on another tank it is what tells
 * series from core loss), the newest winning on a tank measured twice.
 */
export function refineEstimate(previous: PartEstimate | null, next: PartEstimate): PartEstimate {
  if (!previous) return next;
  const others = previous.q_points.filter((p) => !next.q_points.some((n) => n.tank_f === p.tank_f));
  return { ...next, q_points: [...next.q_points, ...others] };
}

/**
 * Loss model from the Q points: 1/Q = Rs / Z + Z Gp with Z = sqrt(L/C). One point cannot tell
 * series loss from parallel (core) loss; it is taken as series loss, the usual case for air
 * and ferrite parts at these frequencies. Two or more points on different tanks are solved by
 * least squares for Rs and Gp (both kept non-negative).
 */
export function lossModel(est: PartEstimate): { rs_ohm: number; gp_s: number } {
  const pts = est.q_points.map((p) => ({ z: Math.sqrt(est.l_h / p.tank_f), invq: 1 / p.q }));
  const distinct = new Set(est.q_points.map((p) => p.tank_f)).size;
  if (distinct < 2) return { rs_ohm: pts[0].z * pts[0].invq, gp_s: 0 };
  // Minimise sum (Rs/z + z Gp - 1/Q)^2 relative to 1/Q: normal equations in (Rs, Gp).
  let a11 = 0, a12 = 0, a22 = 0, b1 = 0, b2 = 0;
  for (const p of pts) {
    const w = 1 / (p.invq * p.invq);
    a11 += (w / (p.z * p.z)); a12 += w; a22 += w * p.z * p.z;
    b1 += (w * p.invq) / p.z; b2 += w * p.invq * p.z;
  }
  const det = a11 * a22 - a12 * a12;
  let rs = (b1 * a22 - b2 * a12) / det;
  let gp = (a11 * b2 - a12 * b1) / det;
  if (!(rs >= 0)) { rs = 0; gp = b2 / a22; }
  if (!(gp >= 0)) { gp = 0; rs = b1 / a11; }
  return { rs_ohm: rs, gp_s: gp };
}
