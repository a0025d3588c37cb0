// Inductance of a single-layer air-core solenoid from its geometry. Pure functions, SI units.
//
// Two formulas, both treating the winding as a uniform current sheet of N turns over length l:
// - Nagaoka's exact current-sheet formula (H. Nagaoka, "The inductance coefficients of
//   solenoids", J. College of Science, Imperial Univ. Tokyo 27, art. 6, 1909; tabulated in
//   E. B. Rosa and F. W. Grover, "Formulas and tables for the calculation of mutual and
//   self-inductance", Bull. Bureau of Standards 8, 1912), used by the coil designer;
// - Wheeler's empirical approximation (H. A. Wheeler, "Simple inductance formulas for radio
//   coils", Proc. IRE 16(10), 1928), kept as a cross-check: it is within about 1 % of Nagaoka
//   for l > 0.8 r (Wheeler's own claim).
// Neither includes the round-wire correction (Rosa 1906) for the gaps between turns: for a
// close-wound coil it is a few tenths of a percent to a few percent, usually downward.

/** Permeability of free space, H/m (CODATA 2018; no longer exactly 4π·1e-7 since the 2019 SI). */
export const MU0_H_PER_M = 1.25663706212e-6;

const METRES_PER_INCH = 0.0254;

/** Throws TypeError if `value` is not a number, RangeError if it is not finite and > 0. */
export function requirePositiveFinite(name: string, value: unknown): number {
  if (typeof value !== "number") throw new TypeError(`${name} must be a number, got ${JSON.stringify(value)}`);
  if (!Number.isFinite(value) || value <= 0) {
    throw new RangeError(`${name} must be a positive finite number, got ${value}`);
  }
  return value;
}

export interface SolenoidGeometry {
  /** Number of turns (need not be whole). */
  turns: number;
  /** Diameter measured to the wire centres, metres. */
  mean_diameter_m: number;
  /** Winding length, metres; for a current sheet, turns × pitch (half a pitch past each end wire). */
  length_m: number;
}

function checkGeometry(g: SolenoidGeometry): void {
  if (typeof g !== "object" || g === null) throw new TypeError("geometry must be an object");
  requirePositiveFinite("turns", g.turns);
  requirePositiveFinite("mean_diameter_m", g.mean_diameter_m);
  requirePositiveFinite("length_m", g.length_m);
}

export interface CompleteEllipticIntegrals {
  /** K(k), first kind. */
  k_first: number;
  /** E(k), second kind. */
  e_second: number;
  /** K(k) − E(k), computed without cancellation (matters for small k). */
  k_minus_e: number;
}

/**
 * Complete elliptic integrals of modulus k (0 ≤ k < 1) by the arithmetic–geometric mean
 * (M. Abramowitz and I. A. Stegun, Handbook of Mathematical Functions, 1964, §17.6):
 * a0 = 1, b0 = k', c0 = k; K = π / (2 a_N); K − E = K Σ 2^(n−1) c_n².
 * The complement k' = sqrt(1 − k²) may be passed when known more exactly than 1 − k² allows.
 */
export function completeEllipticIntegrals(k: number, kComplement?: number): CompleteEllipticIntegrals {
  if (typeof k !== "number") throw new TypeError(`k must be a number, got ${JSON.stringify(k)}`);
  if (!(k >= 0 && k < 1)) throw new RangeError(`k must satisfy 0 <= k < 1, got ${k}`);
  let a = 1;
  let b = kComplement ?? Math.sqrt((1 - k) * (1 + k));
  let c = k;
  let sum = 0.5 * c * c; // n = 0 term: 2^(-1) c0²
  let weight = 0.5;
  for (let n = 0; n < 64; n++) {
    const aNext = 0.5 * (a + b);
    // c_{n+1} = c_n² / (4 a_{n+1}) equals (a_n − b_n)/2 but avoids the subtraction.
    const cNext = (c * c) / (4 * aNext);
    b = Math.sqrt(a * b);
    a = aNext;
    c = cNext;
    weight *= 2;
    sum += weight * c * c;
    if (c <= 1e-17 * a) break;
  }
  const kFirst = Math.PI / (2 * a);
  const kMinusE = kFirst * sum;
  return { k_first: kFirst, e_second: kFirst - kMinusE, k_minus_e: kMinusE };
}

/**
 * Nagaoka's coefficient K_N for a current sheet of diameter D and length l (K_N → 1 as l/D → ∞):
 * K_N = 4 / (3π k') · [ (k'²/k²)(K(k) − E(k)) + E(k) − k ],
 * k = D / sqrt(D² + l²), k' = l / sqrt(D² + l²) (Nagaoka 1909; Rosa and Grover 1912).
 */
export function nagaokaCoefficient(lengthOverDiameter: number): number {
  requirePositiveFinite("lengthOverDiameter", lengthOverDiameter);
  const hyp = Math.hypot(1, lengthOverDiameter);
  const k = 1 / hyp;
  const kc = lengthOverDiameter / hyp;
  const { e_second, k_minus_e } = completeEllipticIntegrals(k, kc);
  return (4 / (3 * Math.PI * kc)) * (((kc * kc) / (k * k)) * k_minus_e + e_second - k);
}

/** Current-sheet inductance, henries: L = K_N µ0 π r² N² / l. */
export function nagaokaInductanceH(g: SolenoidGeometry): number {
  checkGeometry(g);
  const r = g.mean_diameter_m / 2;
  const kN = nagaokaCoefficient(g.length_m / g.mean_diameter_m);
  return (kN * MU0_H_PER_M * Math.PI * r * r * g.turns * g.turns) / g.length_m;
}

/** Wheeler 1928: L[µH] = r² N² / (9 r + 10 l), r and l in inches. Returns henries. */
export function wheelerInductanceH(g: SolenoidGeometry): number {
  checkGeometry(g);
  const rIn = g.mean_diameter_m / 2 / METRES_PER_INCH;
  const lIn = g.length_m / METRES_PER_INCH;
  const microhenries = (rIn * rIn * g.turns * g.turns) / (9 * rIn + 10 * lIn);
  return microhenries * 1e-6;
}

/** Ideal long-solenoid limit, henries: L = µ0 N² A / l (no end correction). */
export function longSolenoidInductanceH(g: SolenoidGeometry): number {
  checkGeometry(g);
  const area = (Math.PI * g.mean_diameter_m * g.mean_diameter_m) / 4;
  return (MU0_H_PER_M * g.turns * g.turns * area) / g.length_m;
}
