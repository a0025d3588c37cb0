// Resistance of annealed copper wire: gauge → diameter, DC resistance per metre with temperature,
// and the skin-effect rise of an isolated straight round wire. Pure functions, SI units.
//
// Sources:
// - Diameters: ASTM B258, "Standard Specification for Standard Nominal Diameters and
//   Cross-Sectional Areas of AWG Sizes of Solid Round Wires Used as Electrical Conductors". It
//   defines the gauge by a geometric series, d(n) = 0.005 in · 92^((36 − n)/39), which is used here
//   unrounded; the standard's printed table rounds each diameter (to 4 significant figures, from
//   memory), so table and formula differ by < 0.05 %.
// - Resistivity: International Annealed Copper Standard, IEC 60028: 1/58 Ω·mm²/m =
//   1.7241e-8 Ω·m at 20 °C, temperature coefficient 0.00393 /K at 20 °C.
// - Skin effect: the exact solution for a round wire, Z/R_dc = (z/2) J0(z)/J1(z) with
//   z = (1 − j) r/δ (S. Ramo, J. R. Whinnery, T. Van Duzer, Fields and Waves in Communication
//   Electronics, ch. 5 — chapter from memory). Proximity effect between the turns of a coil is
//   NOT included: in a close-wound coil it raises the resistance further, often by a factor of
//   two or more (Medhurst 1947 measured it), so this is a lower bound for a coil.

import { MU0_H_PER_M, requirePositiveFinite } from "./solenoid.ts";

/** IEC 60028 annealed-copper resistivity at 20 °C, Ω·m. */
export const COPPER_RESISTIVITY_OHM_M_20C = 1.7241e-8;
/** IEC 60028 temperature coefficient of resistance at 20 °C, per kelvin. */
export const COPPER_TEMPCO_PER_K = 0.00393;

const METRES_PER_INCH = 0.0254;
// The linear coefficient is a fit about 20 °C; refuse temperatures far from any bench.
const MIN_TEMPERATURE_C = -50;
const MAX_TEMPERATURE_C = 200;

/**
 * Nominal diameter of AWG size `awg`, metres (ASTM B258). Sizes 0, 00, 000, 0000 are passed as
 * 0, −1, −2, −3; the standard's range is 0000 to 56 (range from memory).
 */
export function awgDiameterM(awg: number): number {
  if (typeof awg !== "number") throw new TypeError(`awg must be a number, got ${JSON.stringify(awg)}`);
  if (!Number.isInteger(awg) || awg < -3 || awg > 56) {
    throw new RangeError(`awg must be a whole gauge from -3 (0000) to 56, got ${awg}`);
  }
  return 0.005 * Math.pow(92, (36 - awg) / 39) * METRES_PER_INCH;
}

function checkTemperature(temperatureC: number): number {
  if (typeof temperatureC !== "number") {
    throw new TypeError(`temperature_c must be a number, got ${JSON.stringify(temperatureC)}`);
  }
  if (!(temperatureC >= MIN_TEMPERATURE_C && temperatureC <= MAX_TEMPERATURE_C)) {
    throw new RangeError(
      `temperature_c must lie from ${MIN_TEMPERATURE_C} to ${MAX_TEMPERATURE_C} °C (linear copper model), got ${temperatureC}`,
    );
  }
  return temperatureC;
}

/** Resistivity of annealed copper at `temperatureC`, Ω·m (IEC 60028 linear model). */
export function copperResistivityOhmM(temperatureC = 20): number {
  const t = checkTemperature(temperatureC);
  return COPPER_RESISTIVITY_OHM_M_20C * (1 + COPPER_TEMPCO_PER_K * (t - 20));
}

/** DC resistance of a round copper wire, Ω per metre. */
export function copperDcOhmPerM(wireDiameterM: number, temperatureC = 20): number {
  const d = requirePositiveFinite("wire_diameter_m", wireDiameterM);
  return copperResistivityOhmM(temperatureC) / ((Math.PI * d * d) / 4);
}

/** Skin depth in copper, metres: δ = sqrt(ρ / (π f µ0)). */
export function copperSkinDepthM(frequencyHz: number, temperatureC = 20): number {
  const f = requirePositiveFinite("frequency_hz", frequencyHz);
  return Math.sqrt(copperResistivityOhmM(temperatureC) / (Math.PI * f * MU0_H_PER_M));
}

// Above this r/δ the three-term asymptotic series below is accurate to about 1e-9 relative
// (its next term is near −0.062/x³; checked against mpmath).
const ASYMPTOTIC_R_OVER_DELTA = 100;

/**
 * AC/DC resistance ratio of an isolated straight round wire of radius r, as a function of
 * x = r/δ: Re[(z/2) J0(z)/J1(z)], z = (1 − j) x. J1/J0 comes from backward recurrence of the ratio
 * J_n/J_(n−1) = 1 / (2n/z − J_(n+1)/J_n), which is stable because J_n is the minimal solution.
 * Large x uses x/2 + 1/4 + 3/(32x) (from the Hankel asymptotic expansions; checked against mpmath).
 * Low-frequency limit: 1 + x⁴/48.
 */
export function skinEffectRatio(radiusOverSkinDepth: number): number {
  const x = requirePositiveFinite("radiusOverSkinDepth", radiusOverSkinDepth);
  if (x >= ASYMPTOTIC_R_OVER_DELTA) return x / 2 + 0.25 + 3 / (32 * x);
  // z = x (1 − j); 1/z = (1 + j) / (2x).
  const invZRe = 1 / (2 * x);
  const invZIm = 1 / (2 * x);
  let rRe = 0;
  let rIm = 0;
  const nStart = Math.ceil(2 * x) + 30;
  for (let n = nStart; n >= 1; n--) {
    // r_n = 1 / (2n/z − r_(n+1))
    const wRe = 2 * n * invZRe - rRe;
    const wIm = 2 * n * invZIm - rIm;
    const m = wRe * wRe + wIm * wIm;
    rRe = wRe / m;
    rIm = -wIm / m;
  }
  // (z/2) / r_1 with z/2 = (x/2)(1 − j).
  const m = rRe * rRe + rIm * rIm;
  const qRe = rRe / m;
  const qIm = -rIm / m;
  return (x / 2) * (qRe + qIm);
}

/** Skin-effect resistance of an isolated straight copper wire, Ω per metre (no proximity effect). */
export function copperAcOhmPerM(wireDiameterM: number, frequencyHz: number, temperatureC = 20): number {
  const dc = copperDcOhmPerM(wireDiameterM, temperatureC);
  const delta = copperSkinDepthM(frequencyHz, temperatureC);
  return dc * skinEffectRatio(wireDiameterM / 2 / delta);
}
