// What a simple scopeless meter would do with the same edges, for comparison in the benchmark:
// a straight line through all edges, and reciprocal counting (first to last edge over the cycle
// count). Both ignore the threshold delays asin(V/A) of docs/method.md §2, so both read the
// period long on a decaying ring; both use the same first-pass cycle bookkeeping as the fit.

import { assignHalfCycles } from "./cycle-bookkeeping.ts";
import { inductanceFromFrequency } from "./ring-quantities.ts";
import { AnalysisError, type RingInput } from "./types.ts";
import { checkInput } from "./validate-input.ts";

export interface PeriodEstimate {
  period_s: number;
  f_hz: number;
  /** 1/((2 pi f)^2 C): the damped frequency taken as the tank's. */
  inductance_h: number;
  edges_used: number;
}

/** Least-squares line t = a_level + (m/2) T through all indexed edges (one offset per level). */
export function fitLinePeriod(input: RingInput): PeriodEstimate {
  const c = checkInput(input);
  const { m } = assignHalfCycles(c.t_s, c.rising);
  // Pooled within-level regression: centre t and m per level, then one common slope.
  const sums = [0, 1].map(() => ({ n: 0, m: 0, t: 0 }));
  for (let k = 0; k < m.length; k++) {
    if (m[k] !== m[k]) continue;
    const s = sums[c.rising[k]];
    s.n++;
    s.m += m[k];
    s.t += c.t_s[k];
  }
  let smm = 0, smt = 0, used = 0;
  for (let k = 0; k < m.length; k++) {
    if (m[k] !== m[k]) continue;
    const s = sums[c.rising[k]];
    const dm = m[k] - s.m / s.n;
    smm += dm * dm;
    smt += dm * (c.t_s[k] - s.t / s.n);
    used++;
  }
  if (!(smm > 0)) throw new AnalysisError("TOO_FEW_EDGES", "the edges span less than one cycle: raise the drive current or lower the thresholds");
  return estimate((2 * smt) / smm, c.c_f, used);
}

/** Reciprocal counting over the rising edges: (t_last - t_first) / cycles between them. */
export function reciprocalPeriod(input: RingInput): PeriodEstimate {
  const c = checkInput(input);
  const { m } = assignHalfCycles(c.t_s, c.rising);
  let first = -1, last = -1;
  for (let k = 0; k < m.length; k++) {
    if (m[k] !== m[k] || c.rising[k] !== 1) continue;
    if (first < 0) first = k;
    last = k;
  }
  const cycles = first >= 0 ? (m[last] - m[first]) / 2 : 0;
  if (!(cycles > 0)) throw new AnalysisError("TOO_FEW_EDGES", "fewer than two rising edges: raise the drive current or lower the thresholds");
  return estimate((c.t_s[last] - c.t_s[first]) / cycles, c.c_f, cycles + 1);
}

function estimate(period_s: number, c_f: number, used: number): PeriodEstimate {
  const f = 1 / period_s;
  return { period_s, f_hz: f, inductance_h: inductanceFromFrequency(f, c_f), edges_used: used };
}

/**
 * Variance of the least-squares slope through N equally spaced events with independent timing
 * noise sigma: 12 sigma^2 / (N (N^2 - 1)) (S. M. Kay, Fundamentals of Statistical Signal
 * Processing: Estimation Theory, 1993, ch. 3-4; the Cramér-Rao bound for Gaussian noise).
 */
export function linePeriodVariance(sigma_s: number, n: number): number {
  return (12 * sigma_s * sigma_s) / (n * (n * n - 1));
}

/** Variance of (t_N - t_1)/(N - 1) with independent timing noise sigma: 2 sigma^2 / (N - 1)^2. */
export function reciprocalPeriodVariance(sigma_s: number, n: number): number {
  return (2 * sigma_s * sigma_s) / ((n - 1) * (n - 1));
}
