// Conformity decisions with measurement uncertainty (ISO 14253-1:2017 decision rules; JCGM
// 106:2012 for the conformance probability, clauses from memory). The tolerance zone shrunk by
// the expanded uncertainty U on each side is the conformance zone; outside the tolerance widened
// by U lies the nonconformance zone; in between neither is proven and the result is inconclusive.
// Pure: no I/O.

import type { Limits } from "../values/tolerance.ts";

export type Decision = "conforming" | "nonconforming" | "inconclusive";

export interface ConformityResult {
  decision: Decision;
  /** Probability that the true value lies within the limits, normal model, u = U / k. */
  p_conform: number;
  /** The guard-banded acceptance zone (may be empty: lower > upper). */
  acceptance: Limits;
}

/**
 * Classifies `measured` with expanded uncertainty `U` (coverage factor `k`, default 2) against
 * the specification `limits`. Boundaries of the zones count as inside them.
 */
export function decideConformity(measured: number, U: number, limits: Limits, k = 2): ConformityResult {
  if (!Number.isFinite(measured)) throw new RangeError(`measured value must be finite, got ${measured}`);
  if (!(U >= 0) || !Number.isFinite(U)) throw new RangeError(`expanded uncertainty must be finite and >= 0, got ${U}`);
  if (!(limits.upper > limits.lower)) throw new RangeError(`upper limit ${limits.upper} must be above lower limit ${limits.lower}`);
  const acceptance = { lower: limits.lower + U, upper: limits.upper - U };
  // Zone boundaries are inclusive; a part-per-trillion allowance keeps a value typed exactly on a
  // boundary (10.4 µH against 10.5 µH - 0.1 µH) from falling off it through binary rounding.
  const eps = 1e-12 * Math.max(Math.abs(limits.lower), Math.abs(limits.upper));
  let decision: Decision;
  if (measured >= acceptance.lower - eps && measured <= acceptance.upper + eps) decision = "conforming";
  else if (measured < limits.lower - U - eps || measured > limits.upper + U + eps) decision = "nonconforming";
  else decision = "inconclusive";
  return { decision, p_conform: conformanceProbability(measured, U / k, limits), acceptance };
}

/** P(lower <= Y <= upper) for Y ~ N(measured, u²). With u = 0 it is 1 or 0. */
export function conformanceProbability(measured: number, u: number, limits: Limits): number {
  if (u === 0) return measured >= limits.lower && measured <= limits.upper ? 1 : 0;
  return normalCdf((limits.upper - measured) / u) - normalCdf((limits.lower - measured) / u);
}

/** Standard normal distribution function, from erfc below. */
export function normalCdf(z: number): number {
  return 0.5 * erfc(-z / Math.SQRT2);
}

/**
 * Complementary error function, fractional error below 1.2e-7 everywhere (Chebyshev fit from
 * W. H. Press et al., Numerical Recipes in C, 2nd ed., 1992, §6.2, "erfcc"; coefficients from
 * memory, checked against the normal-table values in the tests).
 */
export function erfc(x: number): number {
  const z = Math.abs(x);
  const t = 1 / (1 + 0.5 * z);
  const r =
    t *
    Math.exp(
      -z * z - 1.26551223 +
        t * (1.00002368 + t * (0.37409196 + t * (0.09678418 + t * (-0.18628806 + t * (0.27886807 +
          t * (-1.13520398 + t * (1.48851587 + t * (-0.82215223 + t * 0.17087277)))))))),
    );
  return x >= 0 ? r : 2 - r;
}
