// How far the ring's frequency moves between its first and its last edge, for the saturation
// judgement (part-fault.ts). The analysis's drift test (analysis/diagnostics.ts) asks only
// whether the frequency moves, with one term linear in the amplitude, over the edges the fit
// kept; a core near saturation bends the first cycles hardest, and those are the edges the fit
// sets aside, so that figure understates the swing several times over.
//
// Here the frequency is f(t) = fd (1 + c1 a + c2 a² + c3 a³), a = A(t)/A0 = e^(-alpha t): a
// power series in the ring's amplitude, enough for a smooth L(i) (a differential inductance
// falling with current). Its phase adds wd sum c_j (1 - e^(-j alpha t)) / (j alpha) to the
// edge model; the c_j are fitted jointly with the ring's four parameters by one weighted
// Gauss-Newton step from the fitted point, over every edge with a half-cycle index, the
// rejected ones included. The swing is f(t_last)/f(t_first) - 1, and since L ∝ 1/f² the
// inductance swings by twice that (docs/method.md §1). Pure.

import type { FitState } from "../analysis/analyze-ring.ts";
import { P_ALPHA, P_WD } from "../analysis/edge-model.ts";
import { invertSymmetric } from "../analysis/small-linear-algebra.ts";

const TERMS = 3;
const N = 4 + TERMS;

/** The swing and its standard uncertainty. */
export interface FrequencySwing {
  /** Relative frequency change from the first to the last edge (negative: it falls). */
  df_rel: number;
  /** Standard uncertainty of df_rel from the edges' timing noise (see frequencySwingWithU). */
  df_rel_u: number;
  /** Edges the swing was fitted over. */
  edges: number;
}

/** Relative frequency change from the first to the last edge (negative: it falls), or undefined. */
export function frequencySwing(s: FitState): number | undefined {
  return frequencySwingWithU(s)?.df_rel;
}

/**
 * The swing with its standard uncertainty. The Newton step is linear in the residuals, so the
 * coefficients' covariance is the inverse normal matrix's block H^-1_cc scaled by the timing
 * noise: the fit's per-edge variances, times the reduced chi-square of the seven-parameter model
 * after the step (chi2 - g' H^-1 g over n - 7 edges) when that exceeds one — the rejected edges
 * it takes in may scatter more than the fit's noise estimate says. The swing is a smooth function
 * of the coefficients; its first-order variance is grad' Cov grad with
 * grad_j = [e^(-j alpha t_last) (1 + d_first) - e^(-j alpha t_first) (1 + d_last)] / (1 + d_first)².
 * The decay rate and the first and last edge times are held fixed (second order).
 */
export function frequencySwingWithU(s: FitState): FrequencySwing | undefined {
  const { edges: e, p } = s;
  const wd = p[P_WD];
  const alpha = p[P_ALPHA];
  if (!(alpha > 0)) return undefined;
  const h = new Float64Array(N * N);
  const g = new Float64Array(N);
  const row = new Float64Array(N);
  let tFirst = Infinity;
  let tLast = 0;
  let n = 0;
  let chi2 = 0;
  for (let k = 0; k < e.n; k++) {
    const r = s.r[k];
    const v = s.variance[k];
    if (!(r === r) || !(v > 0) || e.m[k] !== e.m[k]) continue;
    const t = e.t_s[k];
    const j0 = s.jac[4 * k];
    for (let i = 0; i < 4; i++) row[i] = s.jac[4 * k + i];
    for (let j = 1; j <= TERMS; j++) row[3 + j] = (j0 * wd * -Math.expm1(-j * alpha * t)) / (j * alpha * t);
    const w = 1 / v;
    for (let a = 0; a < N; a++) {
      g[a] += w * row[a] * r;
      for (let b = 0; b < N; b++) h[a * N + b] += w * row[a] * row[b];
    }
    chi2 += w * r * r;
    tFirst = Math.min(tFirst, t);
    tLast = Math.max(tLast, t);
    n++;
  }
  if (n < 4 * N) return undefined;
  const hi = invertSymmetric(N, h);
  if (!hi) return undefined;
  // Newton step -H^-1 g: the frequency law's coefficients are its last TERMS entries.
  const step = new Float64Array(N);
  for (let a = 0; a < N; a++) for (let b = 0; b < N; b++) step[a] -= hi[a * N + b] * g[b];
  let gHg = 0;
  for (let a = 0; a < N; a++) gHg -= g[a] * step[a];
  const at = (t: number) => {
    let d = 0;
    for (let j = 1; j <= TERMS; j++) d += step[3 + j] * Math.exp(-j * alpha * t);
    return d;
  };
  const dFirst = at(tFirst);
  const dLast = at(tLast);
  const swing = (1 + dLast) / (1 + dFirst) - 1;
  const grad = new Float64Array(TERMS);
  for (let j = 1; j <= TERMS; j++) {
    grad[j - 1] = (Math.exp(-j * alpha * tLast) * (1 + dFirst) - Math.exp(-j * alpha * tFirst) * (1 + dLast)) / ((1 + dFirst) * (1 + dFirst));
  }
  let variance = 0;
  for (let a = 0; a < TERMS; a++) for (let b = 0; b < TERMS; b++) variance += grad[a] * hi[(4 + a) * N + 4 + b] * grad[b];
  const inflate = Math.max(1, (chi2 - gHg) / (n - N));
  const u = Math.sqrt(inflate * variance);
  return Number.isFinite(swing) && Number.isFinite(u) ? { df_rel: swing, df_rel_u: u, edges: n } : undefined;
}
