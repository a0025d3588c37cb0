// From the fitted (wd, alpha) to what the user reads, with the uncertainty propagation of
// JCGM 100:2008 (the GUM) §5.1 (law of propagation for uncorrelated inputs, first order):
//   w0^2 = wd^2 + alpha^2,  L = 1/(w0^2 C),  Q = w0/(2 alpha),  ESR = w0 L / Q = 2 alpha L
// (docs/method.md §1, standard circuit theory). A timebase error scales every time by the
// same factor, so it scales wd and alpha alike: it enters f0 once, L twice, ESR once, Q not.

import type { ReadingBudgetLine } from "../codes.ts";

export const COVERAGE_K = 2;

export interface RingQuantities {
  w0_rad_s: number;
  f0_hz: number;
  fd_hz: number;
  alpha_per_s: number;
  inductance_h: number;
  q: number;
  esr_ohm: number;
  /** Standard uncertainties (k = 1). */
  u: { f0_hz: number; inductance_h: number; q: number; esr_ohm: number };
  /** Standard relative contributions to u(L)/L. */
  budget: { name: ReadingBudgetLine; rel_u: number }[];
}

/**
 * @param cov  covariance of (wd, alpha): [var wd, cov, var alpha] from the fit
 * @param c_u_f  standard uncertainty of the tank capacitance
 * @param timebase_u_rel  standard relative uncertainty of the tick rate
 */
export function ringQuantities(
  wd: number, alpha: number, cov: [number, number, number], c_f: number, c_u_f: number, timebase_u_rel: number,
): RingQuantities {
  const w02 = wd * wd + alpha * alpha;
  const w0 = Math.sqrt(w02);
  const l = 1 / (w02 * c_f);
  const q = w0 / (2 * alpha);
  const esr = 2 * alpha * l;
  const spread = (g0: number, g1: number) => Math.sqrt(Math.max(0, g0 * g0 * cov[0] + 2 * g0 * g1 * cov[1] + g1 * g1 * cov[2]));
  // Sensitivities of ln w0, ln L, Q and ln ESR to (wd, alpha).
  const fitW0 = spread(wd / w02, alpha / w02);
  const fitL = 2 * fitW0;
  const fitQ = spread(wd / (2 * alpha * w0), 1 / (2 * w0) - w0 / (2 * alpha * alpha));
  const fitEsr = spread(-2 * wd / w02, 1 / alpha - (2 * alpha) / w02);
  const cRel = c_u_f / c_f;
  const lRel = Math.hypot(fitL, cRel, 2 * timebase_u_rel);
  return {
    w0_rad_s: w0,
    f0_hz: w0 / (2 * Math.PI),
    fd_hz: wd / (2 * Math.PI),
    alpha_per_s: alpha,
    inductance_h: l,
    q,
    esr_ohm: esr,
    u: {
      f0_hz: (w0 / (2 * Math.PI)) * Math.hypot(fitW0, timebase_u_rel),
      inductance_h: l * lRel,
      q: fitQ,
      esr_ohm: esr * Math.hypot(fitEsr, cRel, timebase_u_rel),
    },
    budget: [
      { name: "fit", rel_u: fitL },
      { name: "capacitance", rel_u: cRel },
      { name: "timebase", rel_u: 2 * timebase_u_rel },
    ],
  };
}

/** L = 1/((2 pi f)^2 C), the undamped tank relation (docs/method.md §1). */
export function inductanceFromFrequency(f_hz: number, c_f: number): number {
  const w = 2 * Math.PI * f_hz;
  return 1 / (w * w * c_f);
}

/** u(L)/L = sqrt((2 u(f)/f)^2 + (u(C)/C)^2), JCGM 100:2008 §5.1.6 for a product of powers. */
export function inductanceRelU(f_rel_u: number, c_rel_u: number): number {
  return Math.hypot(2 * f_rel_u, c_rel_u);
}
