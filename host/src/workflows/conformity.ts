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
 * Complementary error function to double precision: relative error below 3e-15 on [-6, 27]
 * against 40-digit reference values (the tests). Two classical expansions, written here from
 * M. Abramowitz and I. A. Stegun (eds.), Handbook of Mathematical Functions, NBS AMS 55 (1964),
 * a public-domain work of the US government:
 * - |x| < 1: 1 - erf x, with erf x = (2/sqrt(pi)) e^(-x^2) sum 2^n x^(2n+1) / (1*3*...*(2n+1))
 *   (eq. 7.1.6; every term positive, so no cancellation inside the sum);
 * - |x| >= 1: the continued fraction erfc x = (e^(-x^2)/sqrt(pi)) / (x + (1/2)/(x + 1/(x + (3/2)/(x + ...))))
 *   (eq. 7.1.14), evaluated by the modified Lentz method (W. J. Lentz, Appl. Opt. 15 (1976) 668;
 *   I. J. Thompson and A. R. Barnett, J. Comput. Phys. 64 (1986) 490);
 * - erfc(-x) = 2 - erfc(x) (eq. 7.1.2 with erf odd).
 * e^(-x^2) is taken as e^(-h^2) e^(-(x-h)(x+h)) with h = x cut to 12 fractional bits (h^2 exact),
 * so the rounding of x^2, which e^(-x^2) would magnify by x^2, is not incurred.
 */
export function erfc(x: number): number {
  if (Number.isNaN(x)) return NaN;
  if (x < 0) return 2 - erfc(-x);
  if (x < 1) return 1 - erfSeries(x);
  if (x > 27.3) return 0; // below the smallest double
  return expMinusSquare(x) / (Math.sqrt(Math.PI) * lentzFraction(x));
}

/** e^(-x^2) without the rounding error of x*x. */
function expMinusSquare(x: number): number {
  const h = Math.trunc(x * 4096) / 4096;
  return Math.exp(-h * h) * Math.exp(-(x - h) * (x + h));
}

/** erf x for 0 <= x < 1 by A&S 7.1.6. */
function erfSeries(x: number): number {
  const x2 = x * x;
  let term = x;
  let sum = x;
  for (let n = 1; n < 100 && term > sum * 1e-17; n++) {
    term *= (2 * x2) / (2 * n + 1);
    sum += term;
  }
  return (2 / Math.sqrt(Math.PI)) * expMinusSquare(x) * sum;
}

/** x + (1/2)/(x + 1/(x + (3/2)/(x + ...))) for x >= 1, modified Lentz; a_n = n/2, b_n = x. */
function lentzFraction(x: number): number {
  const TINY = 1e-300;
  let f = x;
  let c = x;
  let d = 0;
  for (let n = 1; n < 1000; n++) {
    const a = n / 2;
    d = x + a * d;
    c = x + a / c;
    d = 1 / (d === 0 ? TINY : d);
    if (c === 0) c = TINY;
    const delta = c * d;
    f *= delta;
    if (Math.abs(delta - 1) < 1e-16) break;
  }
  return f;
}

/**
 * A probability to the digits it can carry (the normal model and the uncertainty behind it are
 * not known to more): two significant digits of the nearer of p and 1 - p, at least four
 * decimals; within 1e-9 of 0 or 1 it is 0 or 1.
 */
export function roundProbability(p: number): number {
  const tail = Math.min(p, 1 - p);
  if (tail < 1e-9) return p < 0.5 ? 0 : 1;
  const decimals = Math.max(4, Math.ceil(-Math.log10(tail)) + 1);
  return Number(p.toFixed(decimals));
}
