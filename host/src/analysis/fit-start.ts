// Where the edge-model fit starts: the grid's candidate minima are each fitted briefly and the
// best kept, with soft limits on the flat directions of the likelihood and round-0 weights.

import { FitWorkspace, fitEdgeModel, type FitLimits } from "./edge-fit.ts";
import { chooseResidualForms, evaluateEdges, P_ALPHA, P_LNA, P_WD, type EdgeSet } from "./edge-model.ts";
import type { InitialGuess } from "./initial-guess.ts";
import { edgeTimeVariances, edgeVariances, estimateNoise } from "./noise-model.ts";
import type { CheckedInput } from "./validate-input.ts";

/**
 * Fits each start briefly on a subset of the edges (the tail, where the amplitude shows, and an
 * even spread) and ranks them by the likelihood they end with on the subset, best first: this is
 * what separates the basins of the (A0, alpha) likelihood (measurement notes §2). The short fits
 * weight with timing noise only; the ranking estimates both noise components from each fit's
 * residuals (subsetNll), because basins that differ in amplitude explain the growth of the
 * residuals along a decaying ring (voltage noise over a falling slope) differently, which the
 * fits' chi2 alone hardly shows. The short fits cannot always tell two basins apart, so the
 * caller may fit the runner-up in full too.
 *
 * Starts that end at one point are one start: a short fit that ends within SAME_POINT_D2 of an
 * earlier one is dropped (the better of the two kept), and a start that already lies that close
 * to an earlier fit's end is not fitted at all (it would only roll to the same minimum).
 */
export function rankStarts(
  candidates: InitialGuess[], e: EdgeSet, c: CheckedInput, q: number, ws: FitWorkspace, limits: FitLimits,
): RankedStart[] {
  if (candidates.length === 1) return [{ ...candidates[0], chi2: 0, nll: 0 }];
  const mask = subsetMask(e, 160, 40);
  let nSub = 0;
  for (let k = 0; k < e.n; k++) nSub += mask[k];
  const scratch = new Float64Array(8 * nSub);
  const varT = Math.max(candidates[0].ms_residual_s2, q);
  const out: (RankedStart & { normal: Float64Array })[] = [];
  const near = (p: Float64Array) => out.findIndex((o) => samePoint(p, o.p, o.normal, nSub / Math.max(o.chi2, 1)));
  for (const cand of candidates) {
    if (near(cand.p) >= 0) continue;
    // The short fit sees only the subset: forms and variances are needed there alone.
    chooseResidualForms(cand.p, e, c.vh_v, c.vl_v, mask);
    const variance = initialVariance(cand.p, e, varT, ws, mask);
    for (let k = 0; k < e.n; k++) variance[k] = mask[k] > 0 ? 1 / variance[k] : 0;
    const fit = fitEdgeModel(e, c.vh_v, c.vl_v, cand.p, variance, null, ws, limits, 25, 1e-3, false, true);
    if (!Number.isFinite(fit.chi2)) continue;
    if (!fit.fresh) evaluateEdges(fit.p, e, c.vh_v, c.vl_v, mask, null, { r: ws.r, slope: ws.slope, curvature: ws.curvature });
    const nll = subsetNll(e, mask, ws, q, varT, fit.p[P_WD], scratch);
    if (!Number.isFinite(nll)) continue;
    const start = { p: fit.p, ms_residual_s2: cand.ms_residual_s2, chi2: fit.chi2, nll, normal: fit.normal };
    const j = near(fit.p);
    if (j < 0) out.push(start);
    else if (nll < out[j].nll) out[j] = start;
  }
  if (out.length === 0) return [{ ...candidates[0], chi2: 0, nll: 0 }];
  return out.sort((a, b) => a.nll - b.nll).map(({ p, ms_residual_s2, chi2, nll }) => ({ p, ms_residual_s2, chi2, nll }));
}

/**
 * Robust -2 ln likelihood of the subset's edge times at a short fit's end (ws.r, ws.slope and
 * ws.curvature hold the model there), as analyze-ring's negLogLikelihood scores a full fit:
 * sum of min(z^2, 25) + ln(time variance), with the two noise components estimated from these
 * residuals (noise-model.ts; from the clean crossings when there are 12 or more).
 */
function subsetNll(e: EdgeSet, mask: Float64Array, ws: FitWorkspace, q: number, varT: number, wd: number, scratch: Float64Array): number {
  const nSub = scratch.length / 8;
  const r = scratch.subarray(0, nSub);
  const slope = scratch.subarray(nSub, 2 * nSub);
  const curv = scratch.subarray(2 * nSub, 3 * nSub);
  const vt = scratch.subarray(3 * nSub, 4 * nSub);
  const v = scratch.subarray(4 * nSub, 5 * nSub);
  const lev = scratch.subarray(5 * nSub, 6 * nSub);
  const clean = scratch.subarray(6 * nSub, 7 * nSub);
  const all = scratch.subarray(7 * nSub, 8 * nSub);
  let j = 0;
  let nClean = 0;
  for (let k = 0; k < e.n && j < nSub; k++) {
    if (!(mask[k] > 0) || e.m[k] !== e.m[k]) continue;
    r[j] = ws.r[k];
    slope[j] = ws.slope[k];
    curv[j] = ws.curvature[k];
    vt[j] = varT;
    lev[j] = 0;
    clean[j] = e.form[k] === 1 ? 1 : 0;
    all[j] = 1;
    nClean += clean[j];
    j++;
  }
  const rs = r.subarray(0, j), ss = slope.subarray(0, j), cs = curv.subarray(0, j), vts = vt.subarray(0, j);
  const noise = estimateNoise(rs, ss, cs, vts, lev.subarray(0, j), (nClean >= 12 ? clean : all).subarray(0, j), q, null);
  edgeTimeVariances(q, noise, ss, wd, all.subarray(0, j), vts);
  edgeVariances(q, noise, ss, cs, vts, v.subarray(0, j));
  let s = 0;
  for (let i = 0; i < j; i++) s += Math.min((rs[i] * rs[i]) / v[i], 25) + Math.log(vts[i]);
  return s;
}

/**
 * Two short-fit points closer than this squared distance (in standard deviations of the subset
 * fit, Birge-normalised so that its reduced chi2 is 1) are one point: half a standard deviation.
 * Short fits from different starts that reach one minimum end far closer (their steps stop
 * within ~0.03 sd of it); distinct minima on the benchmark's captures lie >= 1.2 sd apart.
 */
const SAME_POINT_D2 = 0.25;

/** (a - b)' H (a - b) * scale <= SAME_POINT_D2, H the 4 x 4 normal matrix of the fit at b. */
function samePoint(a: Float64Array, b: Float64Array, h: Float64Array, scale: number): boolean {
  let s = 0;
  for (let i = 0; i < 4; i++) {
    const di = a[i] - b[i];
    for (let j = 0; j < 4; j++) s += di * h[4 * i + j] * (a[j] - b[j]);
  }
  return s * scale <= SAME_POINT_D2;
}

export interface RankedStart extends InitialGuess {
  /** chi2 at the end of the short fit (0 when there was nothing to rank). */
  chi2: number;
  /** Robust -2 ln likelihood on the subset at the end of the short fit (subsetNll; 0 when there
   *  was nothing to rank). */
  nll: number;
}

/**
 * The fit's soft limits (edge-fit.ts): the ring at the last edge at most e^9 times the stopping
 * threshold (beyond that the threshold delays are below 1e-4 rad and carry no amplitude), at the
 * start at most e^12 ~ 1.6e5 times it (a front end has clipped long before), Q at most 1e6, and,
 * when the capture says the ring died out, no next edge.
 */
export function fitLimits(e: EdgeSet, c: CheckedInput, wd: number): FitLimits {
  let last = -1;
  for (let k = 0; k < e.n; k++) if (e.m[k] === e.m[k]) last = k;
  const tLast = last >= 0 ? e.t_s[last] : 0;
  const limits: FitLimits = {
    t_last_s: tLast, ln_v_stop: Math.log(Math.max(c.vh_v, -c.vl_v)), e_max: 9, a_max: 12, alpha_min: wd / 2e6,
  };
  if (c.ring_ended && last >= 0) {
    // No edge follows the last one: the next edge, of the other level, would need the ring
    // beyond that level's threshold on the far side of zero (rising: VH > 0, falling: VL < 0)
    // about half a period on. The last edge itself may have been lost, though (capture dead
    // time, a grazing crossing the comparator missed); then the edge after next, of the last
    // edge's level a period on, is the one that did not happen. The limit is the looser of the
    // two, so one lost edge never contradicts it.
    const vOther = e.rising[last] === 1 ? -c.vl_v : c.vh_v;
    const vSame = e.rising[last] === 1 ? c.vh_v : -c.vl_v;
    if (vOther > 0 && vSame > 0) {
      limits.t_next_s = tLast + Math.PI / wd;
      limits.ln_v_next = Math.log(vOther);
      limits.t_next2_s = tLast + (2 * Math.PI) / wd;
      limits.ln_v_next2 = Math.log(vSame);
    }
  }
  return limits;
}

/** 1 for up to `count` indexed edges: the last `tail` of them and an even spread of the rest. */
export function subsetMask(e: EdgeSet, count: number, tail: number): Float64Array {
  const mask = new Float64Array(e.n);
  let total = 0;
  for (let k = 0; k < e.n; k++) if (e.m[k] === e.m[k]) total++;
  const stride = Math.max(1, (total - tail) / (count - tail));
  let seen = 0;
  let next = 0;
  for (let k = 0; k < e.n; k++) {
    if (e.m[k] !== e.m[k]) continue;
    if (seen >= total - tail || seen >= next) {
      mask[k] = 1;
      if (seen >= next) next += stride;
    }
    seen++;
  }
  return mask;
}

/**
 * Round-0 variances: timing noise only, slopes floored so grazing edges do not dominate. With a
 * mask, only edges with mask[k] > 0 get one (the others stay Infinity).
 */
export function initialVariance(
  p: Float64Array, e: EdgeSet, var_t_s2: number, ws: FitWorkspace, mask: Float64Array | null = null,
): Float64Array {
  const out = new Float64Array(e.n).fill(Infinity);
  evaluateEdges(p, e, 0, 0, mask, null, { slope: ws.slope });
  const a0 = Math.exp(p[P_LNA]);
  for (let k = 0; k < e.n; k++) {
    if (e.m[k] !== e.m[k] || (mask !== null && !(mask[k] > 0))) continue;
    const floor = 0.3 * p[P_WD] * a0 * Math.exp(-p[P_ALPHA] * e.t_s[k]);
    out[k] = var_t_s2 * (ws.slope[k] * ws.slope[k] + floor * floor);
  }
  return out;
}
