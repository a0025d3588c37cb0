// Small statistics for the benchmark: rms errors, efficiencies against the Cramér-Rao bound and
// their Monte Carlo uncertainty, and a robust spread that shows whether a shortfall comes from
// the bulk of the errors or from a few gross ones.

import { MAD_TO_SIGMA } from "../../../host/src/analysis/robust-stats.ts";

export function rms(x: readonly number[]): number {
  if (x.length === 0) return NaN;
  let s = 0;
  for (const v of x) s += v * v;
  return Math.sqrt(s / x.length);
}

export function mean(x: readonly number[]): number {
  return x.length === 0 ? NaN : x.reduce((s, v) => s + v, 0) / x.length;
}

/**
 * Efficiency bound_sd / rms(errors) and its Monte Carlo standard uncertainty. By the delta method
 * u(rms)/rms = sd(e^2) / (2 mean(e^2) sqrt(N)); for Gaussian errors that is 1/sqrt(2N), i.e. 5 %
 * at N = 200. A heavy tail (a few gross errors) makes it larger, and this says so.
 */
export function efficiency(errors: readonly number[], bound_sd: number): { eff: number; u: number } {
  const n = errors.length;
  if (n < 2) return { eff: NaN, u: NaN };
  const sq = errors.map((e) => e * e);
  const m2 = mean(sq);
  const sd2 = Math.sqrt(sq.reduce((s, v) => s + (v - m2) ** 2, 0) / (n - 1));
  const eff = bound_sd / Math.sqrt(m2);
  return { eff, u: (eff * sd2) / (2 * m2 * Math.sqrt(n)) };
}

/** bound_sd over a MAD-based spread of the errors about zero: the efficiency of the bulk. */
export function robustEfficiency(errors: readonly number[], bound_sd: number): number {
  const a = errors.map(Math.abs).sort((x, y) => x - y);
  if (a.length === 0) return NaN;
  const mid = a.length >> 1;
  const med = a.length % 2 ? a[mid] : 0.5 * (a[mid - 1] + a[mid]);
  return bound_sd / (MAD_TO_SIGMA * med);
}

