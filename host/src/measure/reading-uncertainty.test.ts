// The reading's capacitance term and the advice's are one model (ranging/unaccounted-capacitance.ts).

import { describe, expect, it } from "vitest";
import type { RingAnalysis } from "../analysis/index.ts";
import type { CaptureV1 } from "../capture/capture-file.ts";
import type { ReadingBudgetLine } from "../codes.ts";
import { unaccountedCapacitanceRelU } from "../ranging/unaccounted-capacitance.ts";
import { withUnaccountedCapacitance } from "./reading-uncertainty.ts";

const analysis = { inductance_h: 1e-3, inductance_u_h: 2e-6, esr_ohm: 2, esr_u_ohm: 0.01, budget: [{ name: "fit", rel_u: 1e-3 }] } as unknown as RingAnalysis;
const capture = (tank_calibrated?: boolean): CaptureV1 => ({
  format: "henrytick-capture", version: 1, tick_hz: 64e6, tank_c_f: 1e-9, thresholds_v: [0.035, -0.005], edges: [],
  ...(tank_calibrated === undefined ? {} : { calibration: { source: "test", tank_calibrated, nominal_tank_c_f: 1e-9, nominal_tick_hz: 64e6, timebase_ppm: 0 } }),
});
const line = (a: RingAnalysis, name: ReadingBudgetLine) => a.budget.find((b) => b.name === name)!.rel_u;

describe("withUnaccountedCapacitance", () => {
  it("uncalibrated 1 nF tank: the part's Cs and the strays, 10 pF each (1 % each), in quadrature with U of L and ESR", () => {
    const a = withUnaccountedCapacitance(analysis, capture(false));
    expect(line(a, "self-capacitance")).toBeCloseTo(0.01, 12);
    expect(line(a, "stray capacitance")).toBeCloseTo(0.01, 12);
    expect(a.inductance_u_h).toBeCloseTo(Math.hypot(2e-6, 2 * Math.SQRT2 * 0.01 * 1e-3), 15);
    expect(a.esr_u_ohm).toBeCloseTo(Math.hypot(0.01, 2 * Math.SQRT2 * 0.01 * 2), 12);
    expect(a.inductance_h).toBe(analysis.inductance_h);
  });

  it("a calibrated tank holds the strays: only the part's Cs remains", () => {
    const a = withUnaccountedCapacitance(analysis, capture(true));
    expect(line(a, "stray capacitance")).toBe(0);
    expect(line(a, "self-capacitance")).toBeCloseTo(0.01, 12);
  });

  it("a capture that does not record its calibration counts as uncalibrated", () => {
    expect(line(withUnaccountedCapacitance(analysis, capture()), "stray capacitance")).toBeCloseTo(0.01, 12);
  });

  it("gives the advice's figure for the same knowledge", () => {
    for (const cal of [false, true]) {
      const a = withUnaccountedCapacitance(analysis, capture(cal));
      expect(Math.hypot(line(a, "self-capacitance"), line(a, "stray capacitance"))).toBeCloseTo(unaccountedCapacitanceRelU(1e-9, { tank_calibrated: cal }), 12);
    }
  });
});
