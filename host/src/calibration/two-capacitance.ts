// Self-capacitance and self-resonance from two rings of the same part on two known tank
// capacitances (docs/method.md §7): 1/w^2 = L (C + Cs), so
//   L  = (1/w2^2 - 1/w1^2) / (C2 - C1)
//   Cs = (f2^2 C2 - f1^2 C1) / (f1^2 - f2^2)
//   SRF = 1 / (2 pi sqrt(L Cs))
// (method: F. E. Terman and J. M. Pettit, Electronic Measurements, 1952, from memory).
// Uncertainties by the law of propagation (JCGM 100:2008) over an explicit measurement model
// whose inputs separate what is shared between the two rings (timebase, the reference that
// calibrated both tanks) from what is not. Pure: no I/O.

import type { InputQuantity, PropagatedOutput } from "./gum-propagation.ts";
import { groupContributions, propagate } from "./gum-propagation.ts";
import { CalibrationError } from "./errors.ts";

export interface TankRing {
  /** Undamped ring frequency w0/2pi on this tank, Hz. */
  f0_hz: number;
  /** Standard uncertainty of f0 from the fit alone (the timebase is a separate, shared input). */
  u_fit_hz: number;
  /** Effective tank capacitance (tank + fixture, without the part), F. */
  c_f: number;
  /** Standard uncertainty of c_f not shared with the other tank, F. */
  u_c_f: number;
}

export interface TwoCapacitanceInput {
  small: TankRing;
  large: TankRing;
  /** Standard relative uncertainty of the timebase, common to both rings. */
  timebase_u_rel: number;
  /** Standard relative uncertainty that scales both capacitances together (a common reference). */
  shared_c_u_rel?: number;
  /** Standard uncertainty of a capacitance added to both tanks alike (e.g. an assumed reference Cs), F. */
  shared_c_u_f?: number;
}

export interface TwoCapacitanceResult {
  inductance_h: number;
  self_capacitance_f: number;
  /** Null when Cs is not positive (self-resonance undefined or too far to estimate). */
  srf_hz: number | null;
  /** Standard uncertainties. */
  u: { inductance_h: number; self_capacitance_f: number; srf_hz: number | null };
  /** Standard uncertainty of L by budget group (fit, capacitance, timebase, self-capacitance). */
  inductance_groups: { group: string; u_h: number }[];
  /** How far Cs moves for +1 % in each tank capacitance, F: the method's weak spot. */
  cs_per_percent: { small_f: number; large_f: number };
  /** Per-input detail for L and Cs. */
  detail: { inductance: PropagatedOutput; self_capacitance: PropagatedOutput; srf: PropagatedOutput | null };
}

/** Inputs, in model order: f1, f2, timebase factor, C1, C2, shared scale, shared offset. */
function inputQuantities(x: TwoCapacitanceInput): InputQuantity[] {
  const s = x.small;
  const l = x.large;
  return [
    { name: "f0 on the small tank (fit)", value: s.f0_hz, u: s.u_fit_hz, group: "self-capacitance" },
    { name: "f0 on the large tank (fit)", value: l.f0_hz, u: l.u_fit_hz, group: "fit" },
    { name: "timebase", value: 1, u: x.timebase_u_rel, group: "timebase" },
    { name: "small tank capacitance", value: s.c_f, u: s.u_c_f, group: "self-capacitance" },
    { name: "large tank capacitance", value: l.c_f, u: l.u_c_f, group: "capacitance" },
    { name: "shared capacitance scale", value: 1, u: x.shared_c_u_rel ?? 0, group: "capacitance" },
    { name: "shared capacitance offset", value: 0, u: x.shared_c_u_f ?? 0, group: "capacitance" },
  ];
}

/** The measurement model: [L, Cs, SRF] from the seven inputs above. */
export function twoCapacitanceModel(v: number[]): number[] {
  const [f1, f2, tau, c1raw, c2raw, scale, offset] = v;
  const c1 = scale * c1raw + offset;
  const c2 = scale * c2raw + offset;
  const w1 = 2 * Math.PI * f1 * tau;
  const w2 = 2 * Math.PI * f2 * tau;
  const l = (1 / (w2 * w2) - 1 / (w1 * w1)) / (c2 - c1);
  const cs = (f2 * f2 * c2 - f1 * f1 * c1) / (f1 * f1 - f2 * f2);
  const srf = cs > 0 ? 1 / (2 * Math.PI * Math.sqrt(l * cs)) : NaN;
  return [l, cs, srf];
}

export function solveTwoCapacitance(x: TwoCapacitanceInput): TwoCapacitanceResult {
  const { small, large } = x;
  for (const [name, t] of [["small", small], ["large", large]] as const) {
    if (!(t.f0_hz > 0) || !(t.c_f > 0) || !(t.u_fit_hz >= 0) || !(t.u_c_f >= 0)) {
      throw new RangeError(`two-capacitance input "${name}": f0_hz and c_f must be positive, uncertainties non-negative`);
    }
  }
  if (!(large.c_f > small.c_f) || !(small.f0_hz > large.f0_hz)) {
    throw new CalibrationError(
      "NONSENSE_RESULT",
      `the larger tank (${large.c_f} F) must ring lower than the smaller one (${small.c_f} F), got ${large.f0_hz} Hz vs ${small.f0_hz} Hz; check that the part stayed on the clips and measure again`,
    );
  }
  const inputs = inputQuantities(x);
  const [lOut, csOut, srfOut] = propagate(twoCapacitanceModel, inputs);
  if (!(lOut.value > 0)) {
    throw new CalibrationError("NONSENSE_RESULT", "the two rings give a non-positive inductance; check the tank calibration and measure again");
  }
  const srfDefined = csOut.value > 0;
  const c = csOut.contributions;
  return {
    inductance_h: lOut.value,
    self_capacitance_f: csOut.value,
    srf_hz: srfDefined ? srfOut.value : null,
    u: { inductance_h: lOut.u, self_capacitance_f: csOut.u, srf_hz: srfDefined ? srfOut.u : null },
    inductance_groups: groupContributions(lOut.contributions).map((g) => ({ group: g.group, u_h: g.u_y })),
    cs_per_percent: { small_f: c[3].sensitivity * small.c_f * 0.01, large_f: c[4].sensitivity * large.c_f * 0.01 },
    detail: { inductance: lOut, self_capacitance: csOut, srf: srfDefined ? srfOut : null },
  };
}

/** Ring frequency of L with C + Cs, Hz: the forward model, for checks and planning. */
export function ringFrequencyHz(l_h: number, c_f: number, cs_f: number): number {
  return 1 / (2 * Math.PI * Math.sqrt(l_h * (c_f + cs_f)));
}
