// Per-edge noise (docs/method.md §4): an edge's timing error has variance
//   var_k = tick^2/12 + sigma_t^2 + (sigma_v / slope_k)^2,
// capped at (1 rad / wd)^2 where the ring grazes the threshold and the linear picture fails.
// The fit works with level-crossing residuals in volts (edge-model.ts), whose variance is
//   Var(e_k) = sigma_v^2 + slope_k^2 (tick^2/12 + sigma_t^2) + curvature_k^2 var_k^2 / 2.
// The two components are estimated from the residuals by regressing e_k^2 / (1 - h_k) (h_k: the
// edge's leverage, which makes the estimate unbiased for a linearised fit), less the small
// curvature term, on [1, slope_k^2] with weights 1/Var(e_k)^2 (the normal-theory variance of e^2
// is 2 Var^2), iterated. Squared residuals are clipped at c^2 Var(e_k) and rescaled by
// E[min(Z^2, c^2)]: a Huber-type variance M-estimate (Huber's "proposal 2", Huber & Ronchetti,
// Robust Statistics, 2009, §6.4) that a surviving glitch cannot inflate.

import type { EdgeSet } from "./edge-model.ts";
import { median } from "./robust-stats.ts";

const CLIP = 2.5;
/** E[min(Z^2, 2.5^2)] for standard normal Z (numerical integration). */
const CLIP_MEAN = 0.97755998;

export interface NoiseEstimate {
  /** sigma_t^2, s^2: timing jitter beyond the tick. */
  sigma_t2: number;
  /** sigma_v^2, V^2: input-referred comparator noise. */
  sigma_v2: number;
}

/** What updateVariances reads and writes. */
export interface VarianceUpdate {
  /** tick^2 / 12, s^2. */
  tickVar_s2: number;
  noise: NoiseEstimate;
  /** Each edge's slope (V/s) and curvature (V/s^2, times two) at the model (edge-model.ts). */
  slope: Float64Array;
  curvature: Float64Array;
  /** Ring frequency, rad/s (the timing variance's cap). */
  wd: number;
  /** 1 for edges with a half-cycle index (a current slope). */
  assigned: Float64Array;
  /** 1 for edges in the fit, whose change is averaged (null: no average, 0 returned). */
  used: Float64Array | null;
  /** Out: each edge's timing variance, s^2 (in: the one the residuals were corrected with). */
  timingVar_s2: Float64Array;
  /** Out: each edge's residual variance, V^2. */
  variance: Float64Array;
  /** Residuals, moved to the new second-order correction (null: residuals without that term). */
  r: Float64Array | null;
  /**
   * Out, when given (with r): each assigned edge's residual standardised by its new variance,
   * and, in zUsed from index 0 in edge order, those of the used edges (their count is
   * VarianceChange.used_z).
   */
  z?: Float64Array;
  zUsed?: Float64Array;
}

export interface VarianceChange {
  /** Mean relative change of Var(e_k) over the used edges (0 when `used` is null). */
  mean_change: number;
  /** How many standardised residuals went into zUsed. */
  used_z: number;
}

/**
 * Sets every edge's timing variance and residual variance Var(e_k) (V^2) from a new noise
 * estimate, in one pass. Edges with assigned[k] > 0 get the full timing variance and have their
 * residual r[k] moved to the new second-order correction (-curvature var_t / 2, edge-model.ts);
 * the others (no index, no residual) get the slope-free timing variance, and a residual variance
 * from the slope and curvature the caller gives them (edge-model.ts evaluateUnindexed), so that
 * an edge indexed later starts from a finite value of its own. The same pass standardises the
 * residuals when asked (u.z).
 */
export function updateVariances(u: VarianceUpdate): VarianceChange {
  const { slope, curvature, assigned, used, timingVar_s2: varT, variance, r } = u;
  const z = r !== null && u.z ? u.z : null;
  const zUsed = u.zUsed ?? null;
  const cap = 1 / (u.wd * u.wd);
  const vt = u.tickVar_s2 + u.noise.sigma_t2;
  const sv2 = u.noise.sigma_v2;
  let change = 0;
  let counted = 0;
  let nz = 0;
  for (let k = 0; k < varT.length; k++) {
    const s = slope[k];
    const c = curvature[k];
    const isAssigned = assigned[k] > 0;
    const vk = isAssigned ? Math.min(cap, vt + sv2 / (s * s)) : vt;
    if (isAssigned && r !== null) r[k] -= 0.5 * c * (vk - varT[k]);
    varT[k] = vk;
    const before = variance[k];
    const after = sv2 + s * s * vt + 0.5 * c * c * vk * vk;
    variance[k] = after;
    if (z !== null && isAssigned) {
      z[k] = r![k] / Math.sqrt(after);
      if (zUsed !== null && used !== null && used[k] > 0) zUsed[nz++] = z[k];
    }
    if (used !== null && used[k] > 0) {
      change += Math.abs(after - before) / before;
      counted++;
    }
  }
  return { mean_change: counted > 0 ? change / counted : 0, used_z: nz };
}

/** The residuals the noise is estimated from (estimateNoise). */
export interface NoiseSample {
  /** Residuals (volts), slopes and curvatures at the model, per edge. */
  r: Float64Array;
  slope: Float64Array;
  curvature: Float64Array;
  /** The timing variances the residuals were corrected with, s^2. */
  timingVar_s2: Float64Array;
  /** Each edge's leverage in the fit. */
  leverage: Float64Array;
  /** Edges with mask[k] > 0 take part. */
  mask: Float64Array;
  /** tick^2 / 12, s^2. */
  tickVar_s2: number;
}

/**
 * Estimates (sigma_t^2, sigma_v^2) from the residuals of the edges with mask[k] > 0. `start`
 * seeds the clipping; null starts from the median squared residual with all noise in time.
 * `work`: optional scratch arrays (see below), so that a caller in a loop does not allocate.
 */
export function estimateNoise(sample: NoiseSample, start: NoiseEstimate | null, work: Float64Array[] = []): NoiseEstimate {
  const { r, slope, curvature, timingVar_s2: varT, leverage, mask, tickVar_s2 } = sample;
  const n = r.length;
  // What the iterations do not change, per edge with mask[k] > 0 and a finite residual, once:
  // x (slope^2 until xMean is known), the curvature term and r^2 / (1 - h); in `work` (four
  // arrays of at least n entries, the fourth for the median start) when the caller lends them.
  const scratch = (i: number) => (work[i] && work[i].length >= n ? work[i] : new Float64Array(n));
  const xs = scratch(0);
  const curvs = scratch(1);
  const r2h = scratch(2);
  let xMean = 0;
  let count = 0;
  for (let k = 0; k < n; k++) {
    if (!(mask[k] > 0) || !Number.isFinite(r[k])) continue;
    const s2 = slope[k] * slope[k];
    xs[count] = s2;
    curvs[count] = 0.5 * curvature[k] * curvature[k] * varT[k] * varT[k];
    r2h[count] = (r[k] * r[k]) / (1 - Math.min(leverage[k], 0.9));
    xMean += s2;
    count++;
  }
  if (count < 3 || !(xMean > 0)) return start ?? { sigma_t2: 0, sigma_v2: 0 };
  xMean /= count;
  // Model e^2 - curvature term = a + b x with a = sigma_v^2, b = (tick^2/12 + sigma_t^2) xMean,
  // x = slope^2 / xMean: both coefficients in V^2.
  let a: number;
  let b: number;
  if (start) {
    a = start.sigma_v2;
    b = (tickVar_s2 + start.sigma_t2) * xMean;
  } else {
    const ratio = scratch(3);
    let c = 0;
    for (let k = 0; k < n; k++) if (mask[k] > 0 && Number.isFinite(r[k])) ratio[c++] = (r[k] * r[k]) / (slope[k] * slope[k]);
    a = 0;
    b = Math.max(tickVar_s2, median(ratio, c, ratio) / 0.45493642) * xMean; // median of chi-square(1)
  }
  const bMin = tickVar_s2 * xMean;
  for (let c = 0; c < count; c++) xs[c] = xs[c] / xMean;
  for (let it = 0; it < 30; it++) {
    let s0 = 0, sx = 0, sxx = 0, sy = 0, sxy = 0;
    for (let c = 0; c < count; c++) {
      const x = xs[c];
      const curv = curvs[c];
      const v = Math.max(a + b * x + curv, 1e-300);
      const y = Math.min(r2h[c], CLIP * CLIP * v) / CLIP_MEAN - curv;
      const w = 1 / (v * v);
      s0 += w;
      sx += w * x;
      sxx += w * x * x;
      sy += w * y;
      sxy += w * x * y;
    }
    const det = s0 * sxx - sx * sx;
    let na: number;
    let nb: number;
    if (det > 1e-9 * s0 * sxx) {
      na = (sxx * sy - sx * sxy) / det;
      nb = (s0 * sxy - sx * sy) / det;
    } else {
      na = 0; // slopes all alike: the two components cannot be told apart; call it timing
      nb = sxy / sxx;
    }
    if (nb < bMin) {
      nb = bMin;
      na = Math.max(0, (sy - bMin * sx) / s0);
    }
    if (na < 0) {
      na = 0;
      nb = Math.max(bMin, sxy / sxx);
    }
    const change = (Math.abs(na - a) + Math.abs(nb - b)) / (a + b);
    a = na;
    b = nb;
    if (change < 1e-2) break; // the weights need the noise to a few per cent at most
  }
  return { sigma_t2: Math.max(0, b / xMean - tickVar_s2), sigma_v2: a };
}

/** Edges beyond this many robust standard deviations are rejected (Gaussian odds ~6e-7); the
 *  likelihood below charges a rejected edge that much. */
export const REJECT_Z = 5;

/**
 * -2 ln likelihood of the edge times under the fit's own noise model (up to a constant),
 * robust: each edge contributes min(z^2, REJECT_Z^2) + ln(its time variance), an edge without
 * a half-cycle the rejection cost and the mean ln(time variance). Fits from different starts
 * are compared on it: a fit that explains misfit with a larger noise pays in the ln term. The
 * variance is taken in time (varT: tick^2/12 + sigma_t^2 + (sigma_v/slope)^2, capped where the
 * ring grazes its threshold): the data are times, and a model with a smaller ring has smaller
 * slopes, so variances in volts would favour it for no reason.
 */
export function negLogLikelihood(
  r: Float64Array, varT: Float64Array, variance: Float64Array, e: EdgeSet, used: Float64Array,
): number {
  let s = 0;
  let lnSum = 0;
  let counted = 0;
  let unassigned = 0;
  for (let k = 0; k < e.n; k++) {
    if (e.m[k] !== e.m[k]) {
      unassigned++;
      continue;
    }
    const z2 = used[k] > 0 ? (r[k] * r[k]) / variance[k] : REJECT_Z * REJECT_Z;
    const lv = Math.log(varT[k]);
    s += Math.min(z2, REJECT_Z * REJECT_Z) + lv;
    lnSum += lv;
    counted++;
  }
  return s + unassigned * (REJECT_Z * REJECT_Z + (counted > 0 ? lnSum / counted : 0));
}
