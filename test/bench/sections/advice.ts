// Advice quality over the grid of simulated parts: how much worse the setting automatic
// ranging chose is than the best allowed setting found by trying all of them, and how far the
// predicted first ring peaks are from the simulated tester's.

import { GRID, peakPredictionError, rangingRegret } from "../../advice/advice-grid.ts";
import type { BenchSection } from "./types.ts";

export const adviceSection: BenchSection = {
  name: "advice",
  async run(progress) {
    let regretMax = 0;
    let regretQMax = 0;
    let peakErrMax = 0;
    let refused = 0;
    let compared = 0;
    for (const g of GRID) {
      const r = await rangingRegret(g.part);
      if (r.chosen) {
        regretMax = Math.max(regretMax, r.regret);
        regretQMax = Math.max(regretQMax, r.regret_q);
      }
      else refused++;
      const p = await peakPredictionError(g.part);
      peakErrMax = Math.max(peakErrMax, p.max_rel_error);
      compared += p.compared;
      progress(`${g.name}: regret ${r.chosen ? `${r.regret.toFixed(3)} (Q ${r.regret_q.toFixed(2)})` : "none (" + r.refused?.split(":")[0] + ")"}, peak error ${(100 * p.max_rel_error).toFixed(1)} % over ${p.compared} settings`);
    }
    return {
      figures: { "advice.choice_regret_max": regretMax, "advice.choice_regret_q_max": regretQMax, "advice.peak_prediction_error_max": peakErrMax },
      notes: {
        "advice.choice_regret_max": `chosen u(L) over the best allowed setting's, ${GRID.length} parts 1 µH-100 mH, Q 2-500 (${refused} refused with a reason); goal <= 2`,
        "advice.choice_regret_q_max": "the same for u(Q), which the tank tolerance does not swamp (no goal set)",
        "advice.peak_prediction_error_max": `relative, first ring peak, ${compared} settings, predictions from readings on two tanks; goal <= 0.1`,
      },
    };
  },
};
