// The linear ring-down of a part (L, Rs, optional Rp) across a tank capacitance C, released
// with current I0 and zero voltage: the exact solution of docs/method.md §1 (standard circuit
// theory). Pure functions, SI units throughout.

export interface RingPart {
  /** Inductance, henries. */
  l_h: number;
  /** Series loss resistance, ohms. */
  rs_ohm: number;
  /** Parallel (core) loss resistance, ohms; Infinity or undefined when absent. */
  rp_ohm?: number;
}

export interface RingConstants {
  /** Undamped angular frequency w0, rad/s. */
  w0_rad_s: number;
  /** Damped angular frequency wd, rad/s (NaN when not underdamped). */
  wd_rad_s: number;
  /** Decay rate alpha, 1/s. */
  alpha_per_s: number;
  q: number;
  /** True when the circuit rings (alpha < w0). */
  underdamped: boolean;
}

export function ringConstants(part: RingPart, c_f: number): RingConstants {
  const rp = part.rp_ohm ?? Infinity;
  const w0sq = (1 + part.rs_ohm / rp) / (part.l_h * c_f);
  const alpha = part.rs_ohm / (2 * part.l_h) + (Number.isFinite(rp) ? 1 / (2 * rp * c_f) : 0);
  const w0 = Math.sqrt(w0sq);
  const wdsq = w0sq - alpha * alpha;
  return {
    w0_rad_s: w0,
    wd_rad_s: wdsq > 0 ? Math.sqrt(wdsq) : NaN,
    alpha_per_s: alpha,
    q: w0 / (2 * alpha),
    underdamped: wdsq > 0,
  };
}

/**
 * Ring voltage as the comparator sees it (the switch's drain, positive first):
 * v(t) = A0 e^(-alpha t) sin(wd t), A0 = I0 / (C wd).
 */
export interface DampedSine {
  a0_v: number;
  alpha_per_s: number;
  wd_rad_s: number;
}

export function ringWaveform(part: RingPart, c_f: number, i0_a: number): DampedSine {
  const k = ringConstants(part, c_f);
  if (!k.underdamped) throw new RangeError("part does not ring: alpha >= w0 (overdamped)");
  return { a0_v: i0_a / (c_f * k.wd_rad_s), alpha_per_s: k.alpha_per_s, wd_rad_s: k.wd_rad_s };
}

/**
 * A part of inductance l_h with series loss only, whose Q on the tank c_f is q (Rs = w0 L / Q),
 * and its ring started at amplitude a0_v (I0 = a0 C wd): the invented coils of the tests and the
 * benchmark. `q` is the ring's Q as ringConstants computes it.
 */
export function ringOfQ(l_h: number, c_f: number, q: number, a0_v: number): { part: RingPart; ring: DampedSine; q: number } {
  const w0 = 1 / Math.sqrt(l_h * c_f);
  const part = { l_h, rs_ohm: (w0 * l_h) / q };
  const k = ringConstants(part, c_f);
  return { part, ring: ringWaveform(part, c_f, a0_v * c_f * k.wd_rad_s), q: k.q };
}
