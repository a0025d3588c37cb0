// The front end with its nonlinear parts, integrated numerically (ode-dopri.ts) with the
// comparator's threshold crossings located on the step interpolant:
// - a core that saturates: differential inductance L(i) = Lsat + (L0 - Lsat) / (1 + (i/Isat)^2);
// - a class II ceramic tank whose capacitance falls with voltage: C(v) = C0 (1 - k v^2);
// - the flyback clamp: above supply + clamp the switch node conducts through a small resistance.
// The switch-node capacitance and the drive resistor form a pole at 1/(R Csw), nanoseconds fast;
// an explicit integrator would crawl at that pace, so here that branch is folded into the tank:
// Csw in parallel, plus its loss w0^2 Csw^2 R (the branch's admittance at the ring frequency,
// valid while w0 R Csw << 1). States are [i, v_TD]; the clamp shunts the ring directly.
// Without the nonlinear parts this agrees with the exact solution in front-end-circuit.ts
// (the tests check it).

import type { FrontEndCircuit } from "./front-end-circuit.ts";
import { hermite, integrate } from "./ode-dopri.ts";
import type { StepInfo } from "./ode-dopri.ts";

export interface Nonlinearities {
  /** Current at which the differential inductance has fallen halfway to its floor, amperes. */
  saturation_a?: number;
  /** Differential inductance deep in saturation as a fraction of L0 (0..1). */
  saturation_floor?: number;
  /** Tank voltage coefficient k in C(v) = C0 (1 - k v^2), 1/V^2 (class II ceramics). */
  tank_k_per_v2?: number;
  /** Ring amplitude above which the clamp conducts, volts; its dynamic resistance, ohms. */
  clamp_v?: number;
  clamp_ohm?: number;
  /** Resistance in series with the part besides its own, as a function of time (a chattering contact). */
  extra_series_ohm?: (t_s: number) => number;
  /** Longest time the ring may fall silent and come back (a contact open that long), seconds. */
  silence_s?: number;
}

export function differentialInductance(l0_h: number, nl: Nonlinearities, i_a: number): number {
  if (!nl.saturation_a) return l0_h;
  const floor = (nl.saturation_floor ?? 0.1) * l0_h;
  const x = i_a / nl.saturation_a;
  return floor + (l0_h - floor) / (1 + x * x);
}

export interface NonlinearResult {
  /** Crossing times of the comparator thresholds, seconds since the switch opened. */
  times: number[];
  levels: number[];
  /** Ring slope at each crossing, V/s. */
  slopes: number[];
  /** Highest ring voltage reached. */
  peak_v: number;
  /** True when the clamp conducted. */
  clamped: boolean;
  /** The ring v_D - v_T at every integration step (at most period/40 apart), when asked for. */
  samples?: { t_s: number[]; v_v: number[] };
}

/**
 * Integrates the ring from the opening state x0 = [i, v_TD] and returns the comparator
 * crossings (comparator starting low), until the ring no longer reaches a threshold, max_edges
 * crossings, or window_s.
 */
export function nonlinearCrossings(
  c: FrontEndCircuit, nl: Nonlinearities, x0: [number, number],
  rising_v: number, falling_v: number, max_edges: number, window_s: number,
  /** Also return the ring itself at every step (for a comparator that decides by first passage). */
  keepSamples = false,
): NonlinearResult {
  const cTank = c.c_f + c.csw_f;
  const w0 = 1 / Math.sqrt(c.l_h * cTank);
  const gSense = c.sense_ohm !== undefined && Number.isFinite(c.sense_ohm) ? 1 / c.sense_ohm : 0;
  const gp = (Number.isFinite(c.rp_ohm) ? 1 / c.rp_ohm : 0) + w0 * w0 * c.csw_f * c.csw_f * c.r_ohm + gSense;
  const clampV = nl.clamp_v ?? Infinity;
  const gClamp = 1 / (nl.clamp_ohm ?? 1);
  const k = nl.tank_k_per_v2 ?? 0;
  let clamped = false;
  const extra = nl.extra_series_ohm;
  const rhs = (t: number, y: Float64Array, dy: Float64Array) => {
    const i = y[0];
    const vtd = y[1];
    const iClamp = -vtd > clampV ? (-vtd - clampV) * gClamp : 0;
    const rs = extra ? c.rs_ohm + extra(t) : c.rs_ohm;
    dy[0] = (vtd - rs * i) / differentialInductance(c.l_h, nl, i);
    dy[1] = (-i - vtd * gp + iClamp) / (cTank * Math.max(1 - k * vtd * vtd, 0.05));
  };
  const period = (2 * Math.PI) / w0;
  const out: NonlinearResult = { times: [], levels: [], slopes: [], peak_v: 0, clamped: false };
  const samples = keepSamples ? { t_s: [0], v_v: [-x0[1]] } : undefined;
  if (samples) out.samples = samples;
  let high = false;
  let lastPeakT = 0;
  const ring = (s: StepInfo, t: number) => -hermite(s, 1, t); // v_D - v_T = -v_TD
  integrate(rhs, 0, Float64Array.from(x0), window_s, { rtol: 1e-10, atol: 1e-13, h0: period / 200, hmax: period / 40 }, (s) => {
    const v1 = -s.y1[1];
    if (samples) {
      samples.t_s.push(s.t1);
      samples.v_v.push(v1);
    }
    if (v1 > clampV) clamped = true;
    if (v1 > out.peak_v) out.peak_v = v1;
    const level = high ? falling_v : rising_v;
    const f0 = -s.y0[1] - level;
    const f1 = v1 - level;
    const crosses = high ? f0 > 0 && f1 <= 0 : f0 < 0 && f1 >= 0;
    if (crosses) {
      let lo = s.t0, hi = s.t1;
      for (let it = 0; it < 80 && hi - lo > 1e-15 * hi; it++) {
        const mid = 0.5 * (lo + hi);
        const fm = ring(s, mid) - level;
        if (high ? fm > 0 : fm < 0) lo = mid;
        else hi = mid;
      }
      const t = 0.5 * (lo + hi);
      const dt = 1e-6 * (s.t1 - s.t0);
      out.times.push(t);
      out.levels.push(high ? 0 : 1);
      out.slopes.push((ring(s, Math.min(t + dt, s.t1)) - ring(s, Math.max(t - dt, s.t0))) / (Math.min(t + dt, s.t1) - Math.max(t - dt, s.t0)));
      high = !high;
      lastPeakT = t;
      if (out.times.length >= max_edges) return false;
    }
    // Two periods without a crossing: the ring no longer reaches the thresholds.
    return s.t1 - lastPeakT < 2 * period + (nl.silence_s ?? 0);
  });
  out.clamped = clamped;
  return out;
}
