// Where the edge-model fit starts: the grid's candidate minima are each fitted briefly and the
// best kept, with soft limits on the flat directions of the likelihood and round-0 weights.

import { FitWorkspace, fitEdgeModel, type FitLimits } from "./edge-fit.ts";
import { chooseResidualForms, evaluateEdges, makeEdgeSet, P_ALPHA, P_LNA, P_WD, type EdgeSet } from "./edge-model.ts";
import type { InitialGuess } from "./initial-guess.ts";
import { estimateNoise, negLogLikelihood, updateVariances } from "./noise-model.ts";
import type { CheckedInput } from "./validate-input.ts";

/**
 * Fits each start briefly on a subset of the edges (the tail, where the amplitude shows, and an
 * even spread) and ranks them by the likelihood they end with on the subset, best first: this is
 * what separates the basins of the (A0, alpha) likelihood (docs/method.md §2). The short fits
 * weight with timing noise only; the ranking estimates both noise components from each fit's
 * residuals (subsetNll), because basins that differ in amplitude explain the growth of the
 * residuals along a decaying ring (voltage noise over a falling slope) differently, which the
 * fits' chi2 alone hardly shows. The short fits cannot always tell two basins apart, so the
 * caller may fit the runner-up in full too.
 *
 * Starts that end at one point are one start: a short fit that ends within SAME_POINT_D2 of an
 * earlier one is dropped (the likelier of the two kept), and a start that already lies that close
 * to an earlier fit's end is not fitted at all (it would only roll to the same minimum).
 */
export function rankStarts(
  candidates: InitialGuess[], e: EdgeSet, subset: Float64Array, c: CheckedInput, tickVar_s2: number, ws: FitWorkspace,
  limits: FitLimits,
): RankedStart[] {
  if (candidates.length === 1) return [{ ...candidates[0], chi2: 0, nll: 0 }];
  // The short fits see only the subset, so they get an edge set of its edges alone (forms,
  // variances and fits then touch no other edge). It holds the last indexed edges of both
  // levels, so the forms' grazing limit (edge-model.ts) is the same as on the whole set.
  const sub = subsetEdges(e, subset);
  const nSub = sub.n;
  const scratch = new Float64Array(9 * nSub);
  const startVar_s2 = Math.max(candidates[0].ms_residual_s2, tickVar_s2);
  const out: (RankedStart & { normal: Float64Array })[] = [];
  const near = (p: Float64Array) => out.findIndex((o) => samePoint(p, o.p, o.normal, nSub / Math.max(o.chi2, 1)));
  let beyond = false;
  for (const cand of candidates) {
    if (near(cand.p) >= 0) continue;
    // Starts with the ring beyond the fit's limit at the last edge (E > e_max: threshold delays
    // below e^-e_max rad) predict the edges alike, and their short fits all end on the limit at
    // one point: the best of them stands for all.
    if (cand.p[P_LNA] - cand.p[P_ALPHA] * limits.t_last_s - limits.ln_v_stop > limits.e_max) {
      if (beyond) continue;
      beyond = true;
    }
    chooseResidualForms(cand.p, sub, c.vh_v, c.vl_v);
    const w = initialVariance(cand.p, sub, startVar_s2, ws);
    for (let k = 0; k < nSub; k++) w[k] = 1 / w[k];
    const fit = fitEdgeModel(sub, cand.p, w, ws, { vh_v: c.vh_v, vl_v: c.vl_v, timingVar_s2: null, limits, maxIterations: 25, tolChi2: 1e-3, weightedOnly: true });
    if (!Number.isFinite(fit.chi2)) continue;
    if (!fit.fresh) evaluateEdges(fit.p, sub, c.vh_v, c.vl_v, null, null, { r: ws.r, slope: ws.slope, curvature: ws.curvature });
    // A likelihood that cannot be scored (a degenerate noise estimate) ranks last, by chi2.
    const score = subsetNll(sub, ws, tickVar_s2, startVar_s2, fit.p[P_WD], scratch);
    const nll = Number.isFinite(score) ? score : Infinity;
    const start = { p: fit.p, ms_residual_s2: cand.ms_residual_s2, chi2: fit.chi2, nll, normal: fit.normal };
    const j = near(fit.p);
    if (j < 0) out.push(start);
    else if (nll < out[j].nll) out[j] = start;
  }
  if (out.length === 0) return [{ ...candidates[0], chi2: 0, nll: 0 }];
  return out.sort((a, b) => a.nll - b.nll || a.chi2 - b.chi2).map(({ p, ms_residual_s2, chi2, nll }) => ({ p, ms_residual_s2, chi2, nll }));
}

/** The indexed edges with mask[k] > 0, in order, as an edge set of their own. */
function subsetEdges(e: EdgeSet, mask: Float64Array): EdgeSet {
  let n = 0;
  for (let k = 0; k < e.n; k++) if (mask[k] > 0 && e.m[k] === e.m[k]) n++;
  const t = new Float64Array(n);
  const m = new Float64Array(n);
  const rising = new Uint8Array(n);
  let j = 0;
  for (let k = 0; k < e.n; k++) {
    if (!(mask[k] > 0) || e.m[k] !== e.m[k]) continue;
    t[j] = e.t_s[k];
    m[j] = e.m[k];
    rising[j] = e.rising[k];
    j++;
  }
  return makeEdgeSet(t, rising, m);
}

/**
 * Robust -2 ln likelihood of the subset's edge times at a short fit's end (ws.r, ws.slope and
 * ws.curvature hold the model there), as a full fit is scored (noise-model.ts
 * negLogLikelihood), with the two noise components estimated from these
 * residuals (noise-model.ts; from the clean crossings when there are 12 or more). `scratch`:
 * 9 n entries.
 */
function subsetNll(e: EdgeSet, ws: FitWorkspace, tickVar_s2: number, startVar_s2: number, wd: number, scratch: Float64Array): number {
  const n = e.n;
  const vt = scratch.subarray(0, n).fill(startVar_s2);
  const v = scratch.subarray(n, 2 * n);
  const lev = scratch.subarray(2 * n, 3 * n).fill(0);
  const clean = scratch.subarray(3 * n, 4 * n);
  const all = scratch.subarray(4 * n, 5 * n).fill(1);
  // The noise estimate's own scratch (noise-model.ts), so that each start allocates nothing.
  const work = [5, 6, 7, 8].map((i) => scratch.subarray(i * n, (i + 1) * n));
  let nClean = 0;
  for (let k = 0; k < n; k++) {
    clean[k] = e.form[k] === 1 ? 1 : 0;
    nClean += clean[k];
  }
  const r = ws.r.subarray(0, n);
  const slope = ws.slope.subarray(0, n);
  const curv = ws.curvature.subarray(0, n);
  const noise = estimateNoise({ r, slope, curvature: curv, timingVar_s2: vt, leverage: lev, mask: nClean >= 12 ? clean : all, tickVar_s2 }, null, work);
  updateVariances({ tickVar_s2, noise, slope, curvature: curv, wd, assigned: all, used: null, timingVar_s2: vt, variance: v, r: null });
  return negLogLikelihood(r, vt, v, e, all);
}

/**
 * Two short-fit points closer than this squared distance (in standard deviations of the subset
 * fit, Birge-normalised so that its reduced chi2 is 1: R. T. Birge, Phys. Rev. 40, 207, 1932)
 * are one point: 0.7 standard deviations.
 * Short fits from different starts that reach one minimum mostly end far closer (their steps
 * stop within ~0.03 sd of it); the closest distinct minima on the benchmark's captures lay
 * 1.2 sd apart (d2 = 1.6).
 */
const SAME_POINT_D2 = 0.5;

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

/**
 * The edges the start ranking's short fits (and a long capture's round 0) work on: up to 160
 * indexed edges, the last 40 (where the amplitude shows) and an even spread of the rest.
 */
export function rankingSubset(e: EdgeSet): Float64Array {
  return subsetMask(e, 160, 40);
}

/** 1 for up to `count` indexed edges: the last `tail` of them and an even spread of the rest. */
function subsetMask(e: EdgeSet, count: number, tail: number): Float64Array {
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
 * mask, only edges with mask[k] > 0 get one (the others stay Infinity). The slope is the ring's
 * at its zero crossing (thresholds 0), which ws.slope also receives.
 */
export function initialVariance(
  p: Float64Array, e: EdgeSet, var_t_s2: number, ws: FitWorkspace, mask: Float64Array | null = null,
): Float64Array {
  const out = new Float64Array(e.n).fill(Infinity);
  const wd = p[P_WD];
  const alpha = p[P_ALPHA];
  const a0 = Math.exp(p[P_LNA]);
  // At a zero threshold a phase-form edge has u = 0, so its slope S_k (wd - alpha c) is S_k wd
  // exactly (edge-model.ts) and needs no model evaluation; only level-form edges (and, to stay
  // exact, any edge where u would not be a clean zero: e^(alpha t) or 1/A0 overflowing) are
  // evaluated.
  const exact = Number.isFinite(1 / a0) && Number.isFinite(alpha);
  let evaluate: Float64Array | null = null;
  for (let k = 0; k < e.n; k++) {
    if (e.m[k] !== e.m[k] || (mask !== null && !(mask[k] > 0))) continue;
    if (exact && e.form[k] === 1 && alpha * e.t_s[k] < 709) {
      ws.slope[k] = e.scale_v[k] * wd;
      continue;
    }
    evaluate ??= new Float64Array(e.n);
    evaluate[k] = 1;
  }
  if (evaluate) evaluateEdges(p, e, 0, 0, evaluate, null, { slope: ws.slope });
  for (let k = 0; k < e.n; k++) {
    if (e.m[k] !== e.m[k] || (mask !== null && !(mask[k] > 0))) continue;
    const floor = 0.3 * wd * a0 * Math.exp(-alpha * e.t_s[k]);
    out[k] = var_t_s2 * (ws.slope[k] * ws.slope[k] + floor * floor);
  }
  return out;
}
