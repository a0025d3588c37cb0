// Automatic ranging over simulated parts from 1 µH to 100 mH with Q from about 2 to 500
// (issue requirements; values are the simulator's ground truth, no outside source).

import { describe, expect, it } from "vitest";
import { GRID, peakPredictionError, rangingRegret } from "./advice-grid.ts";

const LIMIT_V = 28.8; // the default limit on the reference board: 30 V or 80 % of its 36 V clamp

describe("automatic ranging", () => {
  it.each(GRID)("$name: a usable setting (or the reason why none), no peak over the limit, within 2x the best setting", async ({ part }) => {
    const r = await rangingRegret(part);
    expect(r.max_ring_v).toBeLessThanOrEqual(LIMIT_V);
    if (!r.chosen) {
      expect(r.refused).toMatch(/NO_SETTING|NO_RING/);
      return;
    }
    expect(r.chosen.prediction!.a0_v).toBeLessThanOrEqual(LIMIT_V);
    const enough = r.chosen.analysis.edges_used >= 20;
    const explained = r.chosen.analysis.warnings.some((w) => w.code === "FEW_EDGES_BEST_SETTING");
    expect(enough || explained).toBe(true);
    expect(r.regret).toBeLessThanOrEqual(2);
  });
});

describe("peak prediction", () => {
  it.each(GRID)("$name: predicted first peaks within 10 % of the simulated tester's", async ({ part }) => {
    const r = await peakPredictionError(part);
    if (r.no_reading) {
      // Only a part that automatic ranging also refuses may give nothing to predict from.
      expect(r.no_reading).toMatch(/NO_RING|NO_SETTING/);
      return;
    }
    expect(r.compared).toBeGreaterThanOrEqual(2);
    expect(r.max_rel_error).toBeLessThan(0.1);
  });
});
