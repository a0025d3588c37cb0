// The reading's uncertainty of L and ESR with what the ring alone cannot see: capacitance across
// the part that the capture does not account for (the part's self-capacitance, and the fixture
// and switch node until the tank is calibrated), from the same model the advice predicts with
// (ranging/unaccounted-capacitance.ts). Applied wherever a capture is analysed (read-once.ts),
// so a saved capture re-analyses to the same U. Pure.
//
// L = 1/(w0² C) and ESR = 2 alpha L both scale as 1/C, so the term enters both with the same
// relative size, in quadrature with the analysis's own U (uncorrelated, JCGM 100:2008 §5.1.2).

import type { RingAnalysis } from "../analysis/index.ts";
import { COVERAGE_K } from "../analysis/index.ts";
import type { CaptureV1 } from "../capture/capture-file.ts";
import { unaccountedCapacitance } from "../ranging/unaccounted-capacitance.ts";

export function withUnaccountedCapacitance(a: RingAnalysis, capture: CaptureV1): RingAnalysis {
  // A capture that does not record its calibration is taken as uncalibrated.
  const k = unaccountedCapacitance({ tank_calibrated: capture.calibration?.tank_calibrated === true });
  const selfRel = k.self_u_f / capture.tank_c_f;
  const strayRel = k.stray_u_f / capture.tank_c_f;
  const rel = Math.hypot(selfRel, strayRel);
  const widen = (u: number, x: number) => Math.hypot(u, COVERAGE_K * rel * Math.abs(x));
  return {
    ...a,
    inductance_u_h: widen(a.inductance_u_h, a.inductance_h),
    esr_u_ohm: widen(a.esr_u_ohm, a.esr_ohm),
    budget: [
      ...a.budget,
      { name: "self-capacitance", rel_u: selfRel },
      { name: "stray capacitance", rel_u: strayRel },
    ],
  };
}
