// Cramér-Rao bound for a ring-down capture (docs/method.md §4): the Fisher information of
// the edge model (edge-model.ts) with independent Gaussian timing errors of variance
//   tick^2/12 + sigma_t^2 + (sigma_v / slope_k)^2
// is F = sum_k J_k^T J_k / var_k with J_k = d t_k / d(wd, phi, ln A0, alpha), computed here in
// the equivalent level-crossing form (edge-model.ts) (S. M. Kay,
// Fundamentals of Statistical Signal Processing: Estimation Theory, 1993, §3.9, the Gaussian
// case with parameter-independent covariance). Its inverse bounds the covariance of any unbiased
// estimate; L and Q follow by the same first-order propagation as the analysis itself. The
// extended model (EdgeNoiseModel.noise_bw_hz, skew_u_s) adds the first-passage spread and the
// skew as a fifth parameter with its prior information (the Bayesian information of a Gaussian
// prior adds 1/u^2: H. L. Van Trees, Detection, Estimation, and Modulation Theory, Part I,
// Wiley 1968, §2.4; from memory).

import { evaluateEdges, makeEdgeSet, N_PARAMS, P_ALPHA, P_LNA, P_PHI, P_WD } from "./edge-model.ts";
import { reassignHalfCycles } from "./model-bookkeeping.ts";
import { ringQuantities } from "./ring-quantities.ts";
import { invertSymmetric } from "./small-linear-algebra.ts";
import { firstPassageSpreadRatio } from "./comparator-timing.ts";

export interface RingTruth {
  wd_rad_s: number;
  alpha_per_s: number;
  a0_v: number;
  /** Phase of the ring at t = 0 (0 for a ring that starts at the switch), rad. */
  phi_rad?: number;
  tank_c_f: number;
}

export interface EdgeNoiseModel {
  tick_hz: number;
  sigma_t_s: number;
  sigma_v_v: number;
  /**
   * The extended edge model (comparator-timing.ts). `noise_bw_hz`: the voltage noise is continuous
   * with this first-order bandwidth and decides by first passage, so an edge on slope S scatters
   * by firstPassageSpreadRatio(S tau / sigma) sigma / S instead of sigma / S. `skew_u_s`: a
   * rise/fall delay difference is estimated with the edges, with prior information of this
   * standard uncertainty (Infinity: none; 0 or absent: known, not estimated).
   */
  noise_bw_hz?: number;
  skew_u_s?: number;
}

export interface RingBound {
  /** Standard deviations at the bound (fit only; no capacitance or timebase). */
  l_sd_h: number;
  q_sd: number;
  f0_sd_hz: number;
  /** Damped frequency wd/(2 pi). */
  fd_sd_hz: number;
  alpha_sd_per_s: number;
  /** Edges that entered the information (those the true ring produces). */
  edges: number;
}

/**
 * @param edges  the capture's noiseless crossing times (s) and levels, e.g. from a simulator
 * @param thresholds_v  [rising, falling] thresholds, volts
 */
export function ringCramerRao(
  truth: RingTruth, edges: { times_s: ArrayLike<number>; levels: ArrayLike<number> },
  noise: EdgeNoiseModel, thresholds_v: [number, number],
): RingBound {
  const n = edges.times_s.length;
  // Level form throughout: at the true parameters its information equals the time-domain one.
  const e = makeEdgeSet(Float64Array.from(edges.times_s), Uint8Array.from(edges.levels), new Float64Array(n));
  const p = new Float64Array(N_PARAMS);
  p[P_WD] = truth.wd_rad_s;
  p[P_PHI] = truth.phi_rad ?? 0;
  p[P_LNA] = Math.log(truth.a0_v);
  p[P_ALPHA] = truth.alpha_per_s;
  const [vh, vl] = thresholds_v;
  reassignHalfCycles(p, e, vh, vl, null, new Array(n).fill(null));
  const jac = new Float64Array(4 * n);
  const slope = new Float64Array(n);
  evaluateEdges(p, e, vh, vl, null, null, { jac, slope });
  const varT = 1 / (noise.tick_hz * noise.tick_hz * 12) + noise.sigma_t_s ** 2;
  const tau = noise.noise_bw_hz && noise.noise_bw_hz > 0 ? 1 / (2 * Math.PI * noise.noise_bw_hz) : 0;
  const skewU = noise.skew_u_s ?? 0;
  // Parameters: the ring's four, and the skew when it is estimated (a rising edge's time moves
  // by 1 per unit skew: in the level form its residual by -slope).
  const np = skewU > 0 ? 5 : 4;
  const fisher = new Float64Array(np * np);
  const row = new Float64Array(np);
  let used = 0;
  for (let k = 0; k < n; k++) {
    if (e.m[k] !== e.m[k]) continue;
    used++;
    // Level-crossing form of the Fisher information: J_v = slope * J_t, var_v = slope^2 var_t.
    const rho = tau > 0 && noise.sigma_v_v > 0 ? firstPassageSpreadRatio((Math.abs(slope[k]) * tau) / noise.sigma_v_v) : 1;
    const v = (rho * noise.sigma_v_v) ** 2 + slope[k] * slope[k] * varT;
    for (let i = 0; i < 4; i++) row[i] = jac[4 * k + i];
    if (np === 5) row[4] = e.rising[k] === 1 ? -slope[k] : 0;
    for (let i = 0; i < np; i++) for (let j = 0; j < np; j++) fisher[i * np + j] += (row[i] * row[j]) / v;
  }
  if (np === 5 && Number.isFinite(skewU)) fisher[24] += 1 / (skewU * skewU);
  const full = invertSymmetric(np, fisher);
  const cov = full && np === 5 ? Float64Array.from([0, 1, 2, 3].flatMap((i) => [0, 1, 2, 3].map((j) => full[5 * i + j]))) : full;
  if (!cov) return { l_sd_h: Infinity, q_sd: Infinity, f0_sd_hz: Infinity, fd_sd_hz: Infinity, alpha_sd_per_s: Infinity, edges: used };
  const rq = ringQuantities(truth.wd_rad_s, truth.alpha_per_s, [cov[0], cov[3], cov[15]], truth.tank_c_f, 0, 0);
  return {
    l_sd_h: rq.u.inductance_h,
    q_sd: rq.u.q,
    f0_sd_hz: rq.u.f0_hz,
    fd_sd_hz: Math.sqrt(cov[0]) / (2 * Math.PI),
    alpha_sd_per_s: Math.sqrt(cov[15]),
    edges: used,
  };
}
