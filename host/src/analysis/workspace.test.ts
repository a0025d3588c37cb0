// The fit's scratch buffers (edge-fit.ts FitWorkspace) are kept from one capture to the next:
// nothing the analysis returns may depend on what they held. Edges without a half-cycle index
// (chatter, glitches, lost edges set aside by the bookkeeping) are where that can leak: the
// model is not evaluated there, so their residual, Jacobian row, slope and variance come from
// somewhere else unless the analysis sets them. Damaged captures (lost edges and glitch pairs,
// as in the benchmark's outlier figure) have such edges.

import { describe, expect, it } from "vitest";
import { damage } from "../../../test/bench/analysis/damage.ts";
import { captureOf, GRID, inputOf, preparePoint } from "../../../test/bench/analysis/grid.ts";
import { Random } from "../sim/random.ts";
import { fitRing } from "./analyze-ring.ts";
import { analyzeRing, type RingInput } from "./index.ts";

/** A damaged capture of a benchmark grid point (the outlier figure's recipe, test/bench/analysis/damage.ts). */
function damagedCapture(name: string, seed: number): RingInput {
  const g = GRID.find((p) => p.name === name)!;
  const pp = preparePoint(g);
  const periodTicks = (g.tick_hz * 2 * Math.PI) / pp.ring.wd_rad_s;
  const c = captureOf(pp, seed);
  const d = damage(Array.from(c.ticks), Array.from(c.levels), new Random(1_000_003 + seed), periodTicks);
  return inputOf(pp, d.ticks, d.levels);
}

/** The same edges on another time scale: a different ring with the same edge count. */
function rescaled(input: RingInput, factor: number): RingInput {
  return { ...input, ticks: input.ticks.map((t) => Math.round(t * factor)) };
}

describe("analysis workspace reuse", () => {
  // (A capture whose result, before the fix, changed with what the buffers held.)
  const d = damagedCapture("22u-10n-q80-off", 1);

  it("gives an edge without an index no residual and no Jacobian row", () => {
    const s = fitRing(d);
    let unindexed = 0;
    for (let k = 0; k < s.edges.n; k++) {
      if (s.edges.m[k] === s.edges.m[k]) continue;
      unindexed++;
      expect(s.r[k]).toBeNaN();
      expect([...s.jac.subarray(4 * k, 4 * k + 4)]).toEqual([0, 0, 0, 0]);
    }
    expect(unindexed).toBeGreaterThan(0);
  });

  it("gives the same result whatever capture came before", () => {
    analyzeRing(rescaled(d, 1.37));
    const afterOne = analyzeRing(d);
    analyzeRing(rescaled(d, 0.71));
    const afterOther = analyzeRing(d);
    expect(JSON.stringify(afterOther)).toBe(JSON.stringify(afterOne));
  });
});
