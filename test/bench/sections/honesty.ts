// Honesty of U where the ring alone cannot tell: uncalibrated readings on the smallest tank over
// a class of boards and parts (test/coverage/uncalibrated-small-tank.ts), and independent ngspice
// ring-downs through the physical comparator (test/reference/spice-comparator-cases.ts; null
// without the Debian package ngspice).

import { uncalibratedSmallTankCoverage } from "../../coverage/uncalibrated-small-tank.ts";
import { hasNgspice } from "../../reference/spice.ts";
import { crossCheckAll } from "../../reference/spice-comparator-cases.ts";
import type { CaseSummary } from "../../reference/spice-comparator-cases.ts";
import type { BenchSection } from "./types.ts";

const DRAWS = 200;
const SPICE_SEEDS = 10;

/** Fraction of all seed-cases inside U (the cases have equal seeds). */
function pooled(cases: CaseSummary[], f: (c: CaseSummary) => number): number {
  return cases.reduce((s, c) => s + f(c) * c.seeds, 0) / cases.reduce((s, c) => s + c.seeds, 0);
}

export const honestySection: BenchSection = {
  name: "honesty",
  async run(progress) {
    const { coverage, own_coverage, rows } = await uncalibratedSmallTankCoverage(DRAWS);
    const worst = Math.max(...rows.map((r) => r.error_in_u));
    progress(`${DRAWS} draws: apparent L inside U ${(100 * coverage).toFixed(1)} %, the part's own L ${(100 * own_coverage).toFixed(1)} %, worst |error|/U ${worst.toFixed(2)}`);
    const spice = hasNgspice
      ? crossCheckAll(SPICE_SEEDS, (c) => progress(`ngspice ${c.name}: L in U ${c.l_coverage.toFixed(2)}, Q in U ${c.q_coverage.toFixed(2)}, ${c.unwarned_gross} unwarned beyond 3 U`))
      : null;
    return {
      figures: {
        "analysis.uncal_small_tank_coverage_l": coverage, "analysis.uncal_small_tank_own_l_coverage": own_coverage,
        "analysis.spice.coverage_l_min": spice ? Math.min(...spice.map((c) => c.l_coverage)) : null,
        "analysis.spice.coverage_q_min": spice ? Math.min(...spice.map((c) => c.q_coverage)) : null,
        "analysis.spice.unwarned_gross": spice ? spice.reduce((n, c) => n + c.unwarned_gross, 0) : null,
        "analysis.spice.coverage_l_pooled": spice ? pooled(spice, (c) => c.l_coverage) : null,
        "analysis.spice.coverage_q_pooled": spice ? pooled(spice, (c) => c.q_coverage) : null,
      },
      notes: {
        "analysis.spice.coverage_l_min": `fraction of ${SPICE_SEEDS} seeds with L inside U, least over six ngspice ring-downs (10 µH-100 mH) through the reference board's physical comparator; goal >= 0.93`,
        "analysis.spice.coverage_q_min": "the same for Q; goal >= 0.93",
        "analysis.spice.unwarned_gross": "seeds with an L or Q error beyond 3 U and no warning, all six cases; goal 0",
        "analysis.spice.coverage_l_pooled": `fraction of all ${6 * SPICE_SEEDS} seed-cases with L inside U (a case's own fraction over ${SPICE_SEEDS} seeds moves by 0.1 a seed; no goal)`,
        "analysis.spice.coverage_q_pooled": "the same for Q (no goal)",
        "analysis.uncal_small_tank_coverage_l": `fraction of ${DRAWS} uncalibrated 1 nF-tank readings (boards with ±1 % tanks, 12-29 pF strays; parts 100 µH-50 mH, Q 20-300, Cs 0-12 pF) whose apparent L (C + Cs)/C lies inside U (k = 2); goal >= 0.93`,
        "analysis.uncal_small_tank_own_l_coverage": "the same against the part's own L (Cs not removed; no goal: a single tank cannot separate Cs)",
      },
    };
  },
};
