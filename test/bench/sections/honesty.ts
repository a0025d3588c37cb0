// Honesty of U where the ring alone cannot tell: uncalibrated readings on the smallest tank over
// a class of boards and parts (test/coverage/uncalibrated-small-tank.ts).

import { uncalibratedSmallTankCoverage } from "../../coverage/uncalibrated-small-tank.ts";
import type { BenchSection } from "./types.ts";

const DRAWS = 200;

export const honestySection: BenchSection = {
  name: "honesty",
  async run(progress) {
    const { coverage, own_coverage, rows } = await uncalibratedSmallTankCoverage(DRAWS);
    const worst = Math.max(...rows.map((r) => r.error_in_u));
    progress(`${DRAWS} draws: apparent L inside U ${(100 * coverage).toFixed(1)} %, the part's own L ${(100 * own_coverage).toFixed(1)} %, worst |error|/U ${worst.toFixed(2)}`);
    return {
      figures: { "analysis.uncal_small_tank_coverage_l": coverage, "analysis.uncal_small_tank_own_l_coverage": own_coverage },
      notes: {
        "analysis.uncal_small_tank_coverage_l": `fraction of ${DRAWS} uncalibrated 1 nF-tank readings (boards with ±1 % tanks, 12-29 pF strays; parts 100 µH-50 mH, Q 20-300, Cs 0-12 pF) whose apparent L (C + Cs)/C lies inside U (k = 2); goal >= 0.93`,
        "analysis.uncal_small_tank_own_l_coverage": "the same against the part's own L (Cs not removed; no goal: a single tank cannot separate Cs)",
      },
    };
  },
};
