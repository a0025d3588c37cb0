// A reading with the test leads' inductance (calibrate short, nulling.ts) taken out, and with the
// uncertainty of the fixture capacitance (calibrate open, open-nulling.ts) that the capture's
// tank value includes. Applied wherever a capture is analysed (measure/read-once.ts), so a saved
// capture re-analyses to the same value. Pure.

import type { RingAnalysis } from "../analysis/index.ts";
import { COVERAGE_K } from "../analysis/index.ts";
import type { CaptureV1 } from "../capture/capture-file.ts";

/**
 * A reading with the leads' inductance taken out: L_part = L_read − L_leads, and
 * u(L_part)² = u(L_read)² + u(L_leads)² (independent, JCGM 100:2008 §5.1.2). The budget's
 * relative lines are rescaled to the smaller value and a `leads` line is added. The ESR still
 * includes the leads' resistance (milliohms). A capture without a lead value is returned as is.
 */
export function withLeadNulling(a: RingAnalysis, capture: CaptureV1): RingAnalysis {
  const l_leads = capture.calibration?.lead_inductance_h;
  if (l_leads === undefined || l_leads === 0) return a;
  const u_leads = capture.calibration?.lead_u_h ?? 0;
  const l = a.inductance_h - l_leads;
  // A shorted pair nulls to about zero: keep the scale of the relative lines finite.
  const scale = a.inductance_h / Math.max(Math.abs(l), u_leads, 1e-15);
  return {
    ...a,
    inductance_h: l,
    inductance_u_h: Math.hypot(a.inductance_u_h, COVERAGE_K * u_leads),
    budget: [...a.budget.map((b) => ({ ...b, rel_u: b.rel_u * scale })), { name: "leads", rel_u: (u_leads / a.inductance_h) * scale }],
  };
}


/**
 * The fixture's capacitance (open nulling) is already in the capture's tank_c_f (capture-build.ts
 * adds it where the tank's value does not hold it), so the value needs nothing more; its
 * uncertainty is the budget's `fixture` line, u(Cf)/C (L = 1/(w0² C): relative sensitivity −1),
 * combined into U. A capture without a fixture value is returned as is.
 */
export function withFixtureCapacitance(a: RingAnalysis, capture: CaptureV1): RingAnalysis {
  const u_f = capture.calibration?.fixture_u_f;
  if (u_f === undefined || capture.calibration?.fixture_capacitance_f === undefined) return a;
  const rel = u_f / capture.tank_c_f;
  return {
    ...a,
    inductance_u_h: Math.hypot(a.inductance_u_h, COVERAGE_K * rel * a.inductance_h),
    budget: [...a.budget, { name: "fixture", rel_u: rel }],
  };
}
