// Capacitance in parallel with the tank that a single-tank reading cannot separate from it, as a
// standard uncertainty: the one model behind the advice's prediction (predict.ts) and the
// reading's own U (measure/reading-uncertainty.ts, calibration/uncertainty-budget.ts). Pure.
//
// Since L = 1/(w0² (C + ΔC)), a capacitance ΔC the reading leaves out moves L by -ΔC/(C + ΔC)
// ≈ -ΔC/C (docs/method.md §7), so its relative contribution to u(L)/L is u(ΔC)/C.
//
// - The part's own self-capacitance: a few to a few tens of pF for small wound parts; 10 pF
//   standard (common bench practice, no source). Only the two-tank reading (--self-cap) removes it.
// - The fixture and switch node until the tank is calibrated with them (about 20 pF on the
//   reference board, docs/hardware.md; 10 pF standard). A calibrated tank's capacitance already
//   holds them (docs/calibration.md).

export const SELF_CAPACITANCE_U_F = 10e-12;
export const UNCALIBRATED_STRAY_U_F = 10e-12;

export interface CapacitanceKnowledge {
  /** The tank's capacitance was calibrated on this tester (fixture and switch node included). */
  tank_calibrated: boolean;
  /** The part's self-capacitance was measured and removed (two tanks). Default false. */
  self_capacitance_removed?: boolean;
}

/** The unaccounted capacitance's two shares, standard uncertainties in farads. */
export function unaccountedCapacitance(k: CapacitanceKnowledge): { self_u_f: number; stray_u_f: number; u_f: number } {
  const self_u_f = k.self_capacitance_removed ? 0 : SELF_CAPACITANCE_U_F;
  const stray_u_f = k.tank_calibrated ? 0 : UNCALIBRATED_STRAY_U_F;
  return { self_u_f, stray_u_f, u_f: Math.hypot(self_u_f, stray_u_f) };
}

/** Its standard relative contribution to u(L)/L on a tank of `tank_c_f`. */
export function unaccountedCapacitanceRelU(tank_c_f: number, k: CapacitanceKnowledge): number {
  return unaccountedCapacitance(k).u_f / tank_c_f;
}
