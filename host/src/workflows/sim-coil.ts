// The simulated coil for winding practice: a close-wound single layer on a fixed former, so its
// inductance follows Nagaoka's current sheet (physics/coil-design.ts) rather than a pure N² law
// — the winding advice has to learn the difference, as it does on a real former.

import { airCoreCoil } from "../physics/coil-design.ts";
import { awgDiameterM } from "../physics/copper-wire.ts";
import type { PartModel } from "../sim/scenario.ts";

export interface FormerSpec {
  /** Former (winding) mean diameter, metres. */
  mean_diameter_m: number;
  /** Wire gauge (ASTM B258). */
  awg: number;
  /** Winding pitch as a multiple of the bare wire diameter (enamel and spacing). */
  pitch_factor: number;
}

/** Default bench former: 20 mm diameter, AWG 24, enamel pitch (invented demo values). */
export const DEFAULT_FORMER: FormerSpec = { mean_diameter_m: 0.02, awg: 24, pitch_factor: 1.12 };

/** Part values of `turns` close-wound turns on the former; RangeError outside Medhurst's table. */
export function coilOnFormer(turns: number, former: FormerSpec = DEFAULT_FORMER): PartModel {
  if (!Number.isInteger(turns) || turns < 1) throw new RangeError(`turns must be a whole number ≥ 1, got ${turns}`);
  const wire = awgDiameterM(former.awg);
  const coil = airCoreCoil({
    turns,
    mean_diameter_m: former.mean_diameter_m,
    length_m: turns * wire * former.pitch_factor,
    awg: former.awg,
  });
  return { inductance_h: coil.inductance_h, series_ohm: coil.series_ohm, self_capacitance_f: coil.self_capacitance_f };
}

/** Whole-turn range the former supports (l/D inside Medhurst's self-capacitance table). */
export function formerTurnRange(former: FormerSpec = DEFAULT_FORMER): { min: number; max: number } {
  let min = 0;
  let max = 0;
  for (let n = 1; n <= 2000; n++) {
    try {
      coilOnFormer(n, former);
      if (min === 0) min = n;
      max = n;
    } catch {
      if (min !== 0) break;
    }
  }
  return { min, max };
}
