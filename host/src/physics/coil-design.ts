// A single-layer air-core coil from its geometry: the part values the simulated tester needs
// (inductance, series resistance, self-capacitance), each with a note saying how it was found.
// Inductance: Nagaoka's current sheet (solenoid.ts). Self-capacitance: Medhurst 1947
// (self-capacitance.ts). Resistance: annealed copper per ASTM B258 / IEC 60028 (copper-wire.ts).

import { awgDiameterM, copperAcOhmPerM, copperDcOhmPerM } from "./copper-wire.ts";
import { MEDHURST_TABLE, medhurstH } from "./self-capacitance.ts";
import { nagaokaCoefficient, nagaokaInductanceH, requirePositiveFinite, wheelerInductanceH } from "./solenoid.ts";

export interface AirCoreCoilSpec {
  /** Number of turns. */
  turns: number;
  /** Diameter to the wire centres (former diameter plus one wire diameter), metres. */
  mean_diameter_m: number;
  /** Winding length, metres: turns × pitch (the current-sheet convention). */
  length_m: number;
  /** Wire gauge (ASTM B258); give this or wire_diameter_m, not both. */
  awg?: number;
  /** Bare copper diameter, metres; give this or awg, not both. */
  wire_diameter_m?: number;
  /** Winding temperature, °C; default 20. */
  temperature_c?: number;
  /**
   * When given, series_ohm includes the skin effect of an isolated straight wire at this
   * frequency (a lower bound: proximity effect between turns is not modelled). When absent,
   * series_ohm is the DC resistance.
   */
  resistance_frequency_hz?: number;
}

export interface AirCoreCoil {
  /** Nagaoka current-sheet inductance, henries. */
  inductance_h: number;
  /** Series loss resistance, ohms (DC, or skin effect at resistance_frequency_hz). */
  series_ohm: number;
  /** DC resistance of the winding, ohms. */
  dc_ohm: number;
  /** Medhurst self-capacitance, farads. */
  self_capacitance_f: number;
  /** Length of wire in the helix, metres (leads not included). */
  wire_length_m: number;
  /** Bare copper diameter used, metres. */
  wire_diameter_m: number;
  /** Wheeler 1928 value, henries, as a cross-check on inductance_h. */
  wheeler_inductance_h: number;
  /** How each value was found, and any caveat that applies to this coil. */
  notes: string[];
}

function wireDiameterOf(spec: AirCoreCoilSpec): number {
  const hasAwg = spec.awg !== undefined;
  const hasDiameter = spec.wire_diameter_m !== undefined;
  if (hasAwg === hasDiameter) {
    throw new TypeError("awg / wire_diameter_m: give exactly one of them (the wire gauge or its bare diameter)");
  }
  return hasAwg ? awgDiameterM(spec.awg!) : requirePositiveFinite("wire_diameter_m", spec.wire_diameter_m);
}

/** Part values of a single-layer air-core copper coil from its geometry. */
export function airCoreCoil(spec: AirCoreCoilSpec): AirCoreCoil {
  if (typeof spec !== "object" || spec === null) throw new TypeError("spec must be an object");
  const turns = requirePositiveFinite("turns", spec.turns);
  const d = requirePositiveFinite("mean_diameter_m", spec.mean_diameter_m);
  const l = requirePositiveFinite("length_m", spec.length_m);
  const wireD = wireDiameterOf(spec);
  const temperatureC = spec.temperature_c ?? 20;
  const pitch = l / turns;
  if (wireD > pitch) {
    throw new RangeError(
      `length_m ${l} is too short for ${turns} turns of ${wireD} m wire (pitch ${pitch} m < wire diameter); lengthen the winding or use thinner wire`,
    );
  }
  if (wireD >= d) throw new RangeError(`wire_diameter_m ${wireD} must be smaller than mean_diameter_m ${d}`);
  const lOverD = l / d;
  const medhurstMin = MEDHURST_TABLE[0].l_over_d;
  const medhurstMax = MEDHURST_TABLE[MEDHURST_TABLE.length - 1].l_over_d;
  if (lOverD < medhurstMin || lOverD > medhurstMax) {
    throw new RangeError(
      `length_m / mean_diameter_m = ${lOverD} lies outside Medhurst's self-capacitance table (${medhurstMin} to ${medhurstMax})`,
    );
  }

  const geometry = { turns, mean_diameter_m: d, length_m: l };
  const inductanceH = nagaokaInductanceH(geometry);
  const wheelerH = wheelerInductanceH(geometry);
  const kN = nagaokaCoefficient(lOverD);
  const med = medhurstH(lOverD);
  const selfCapacitanceF = med.h * (d * 100) * 1e-12;
  // Helix: each turn is the hypotenuse of its circumference and the pitch.
  const wireLengthM = turns * Math.hypot(Math.PI * d, pitch);
  const dcOhm = wireLengthM * copperDcOhmPerM(wireD, temperatureC);
  const f = spec.resistance_frequency_hz;
  const seriesOhm =
    f === undefined ? dcOhm : wireLengthM * copperAcOhmPerM(wireD, requirePositiveFinite("resistance_frequency_hz", f), temperatureC);

  const notes = [
    `L: Nagaoka current sheet, K = ${kN.toFixed(5)}; Wheeler 1928 gives ${(wheelerH * 1e6).toPrecision(5)} µH ` +
      `(${(((wheelerH - inductanceH) / inductanceH) * 100).toFixed(2)} %); round-wire correction not applied`,
    `Cs: Medhurst 1947, H = ${med.h.toFixed(3)} pF/cm at l/D = ${lOverD.toFixed(3)}` +
      (med.from_memory ? " (interpolated from a table row quoted from memory)" : ""),
    f === undefined
      ? `R: DC resistance of ${wireLengthM.toFixed(3)} m of annealed copper at ${temperatureC} °C (IEC 60028, ASTM B258)`
      : `R: isolated-wire skin effect at ${f} Hz, ${(seriesOhm / dcOhm).toFixed(2)} × DC, at ${temperatureC} °C; ` +
        "proximity effect between turns not included, so the real coil loses more",
    "Wire length: helix only, leads not included",
  ];
  if (l < 0.4 * d) notes.push("Wheeler's formula is outside its stated 1 % range (l < 0.8 r)");
  return {
    inductance_h: inductanceH,
    series_ohm: seriesOhm,
    dc_ohm: dcOhm,
    self_capacitance_f: selfCapacitanceF,
    wire_length_m: wireLengthM,
    wire_diameter_m: wireD,
    wheeler_inductance_h: wheelerH,
    notes,
  };
}
