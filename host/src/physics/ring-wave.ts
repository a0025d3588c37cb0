// A ring waveform as the comparator sees it, positive first:
//   v(t) = e^(-alpha t) (P cos wd t + Q sin wd t) + S e^(lambda3 t) + offset
// The exponential term is the front end's fast third pole (the drive resistor charging the
// switch-node capacitance); it dies within nanoseconds but shapes the first edge. The plain
// second-order ring of docs/method.md §1 is the case P = S = 0, Q = A0.

export interface RingWave {
  alpha_per_s: number;
  wd_rad_s: number;
  p_v: number;
  q_v: number;
  s_v: number;
  lambda3_per_s: number;
  /** Rest value of v (microvolts: the sense divider's current through the winding). Default 0. */
  offset_v?: number;
}

export function waveValue(w: RingWave, t: number): number {
  const e = Math.exp(-w.alpha_per_s * t);
  const c = Math.cos(w.wd_rad_s * t);
  const s = Math.sin(w.wd_rad_s * t);
  const fast = w.s_v !== 0 ? w.s_v * Math.exp(w.lambda3_per_s * t) : 0;
  return e * (w.p_v * c + w.q_v * s) + fast + (w.offset_v ?? 0);
}

export function waveSlope(w: RingWave, t: number): number {
  const a = w.alpha_per_s;
  const wd = w.wd_rad_s;
  const e = Math.exp(-a * t);
  const c = Math.cos(wd * t);
  const s = Math.sin(wd * t);
  const fast = w.s_v !== 0 ? w.s_v * w.lambda3_per_s * Math.exp(w.lambda3_per_s * t) : 0;
  return e * ((-a * w.p_v + wd * w.q_v) * c + (-a * w.q_v - wd * w.p_v) * s) + fast;
}

/** Amplitude of the oscillating part at t = 0 (the envelope's start). */
export function waveAmplitude(w: RingWave): number {
  return Math.hypot(w.p_v, w.q_v);
}

/**
 * Time of the n-th extremum of the oscillating part (n = 0 is the first maximum for a
 * positive-first ring): e^(-a t) sin(wd t + psi) has extremes at wd t + psi = atan2(wd, a) + n pi.
 */
export function waveExtremum(w: RingWave, n: number): number {
  const psi = Math.atan2(w.p_v, w.q_v);
  const base = Math.atan2(w.wd_rad_s, w.alpha_per_s) - psi;
  return (base + n * Math.PI) / w.wd_rad_s;
}

/** The §1 ring A0 e^(-alpha t) sin(wd t) as a RingWave. */
export function sineWave(a0_v: number, alpha_per_s: number, wd_rad_s: number): RingWave {
  return { alpha_per_s, wd_rad_s, p_v: 0, q_v: a0_v, s_v: 0, lambda3_per_s: 0 };
}
