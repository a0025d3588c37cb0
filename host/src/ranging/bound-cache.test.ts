// The one-pass bound against the reference computation it replaces: the simulator's exact
// crossing times fed to the analysis's Cramér-Rao bound (analysis/cramer-rao.ts).

import { describe, expect, it } from "vitest";
import { ringCramerRao } from "../analysis/index.ts";
import { sineWave } from "../physics/ring-wave.ts";
import { crossingTimes } from "../sim/comparator-edges.ts";
import { Random } from "../sim/random.ts";
import type { RingBoundInput } from "./bound-cache.ts";
import { predictedRingBound, rangingWork } from "./bound-cache.ts";

function reference(b: RingBoundInput): { l_rel: number; q_rel: number; edges: number } {
  const edges = crossingTimes(sineWave(b.a0_v, b.alpha_per_s, b.wd_rad_s), b.vh_v, b.vl_v, b.max_edges, 1e3);
  if (edges.times.length < 6) return { l_rel: Infinity, q_rel: Infinity, edges: edges.times.length };
  const r = ringCramerRao(
    { wd_rad_s: b.wd_rad_s, alpha_per_s: b.alpha_per_s, a0_v: b.a0_v, tank_c_f: b.tank_c_f },
    { times_s: edges.times, levels: edges.levels },
    { tick_hz: b.tick_hz, sigma_t_s: b.sigma_t_s, sigma_v_v: b.sigma_v_v },
    [b.vh_v, b.vl_v],
  );
  const w02 = b.wd_rad_s ** 2 + b.alpha_per_s ** 2;
  const l = 1 / (w02 * b.tank_c_f);
  const q = Math.sqrt(w02) / (2 * b.alpha_per_s);
  return { l_rel: r.l_sd_h / l, q_rel: r.q_sd / q, edges: r.edges };
}

describe("predicted ring bound", () => {
  const rng = new Random(19);
  const cases: RingBoundInput[] = [];
  for (let i = 0; i < 60; i++) {
    const f = 10 ** (2 + 4 * rng.uniform()); // 100 Hz to 1 MHz
    const q = 10 ** (0.1 + 3 * rng.uniform()); // about 1.3 to 1 300
    const wd = 2 * Math.PI * f;
    cases.push({
      a0_v: 10 ** (-1.3 + 2.8 * rng.uniform()), // 50 mV to 30 V: from barely above the thresholds
      alpha_per_s: wd / (2 * q), wd_rad_s: wd, tank_c_f: 10 ** (-9 + 3 * rng.uniform()),
      vh_v: 0.035, vl_v: -0.005, max_edges: 8192, tick_hz: 64e6,
      sigma_t_s: 3e-9 * (0.5 + rng.uniform()), sigma_v_v: 0.6e-3 * (0.5 + rng.uniform()),
    });
  }

  it.each(cases.map((c, i) => [i, c] as const))("case %i: the same edges and the same bound as the edge list and the analysis give", (_i, c) => {
    const fast = predictedRingBound(c);
    const ref = reference(c);
    expect(fast.edges).toBe(ref.edges);
    if (!Number.isFinite(ref.l_rel)) {
      expect(fast.l_rel).toBe(Infinity);
      return;
    }
    expect(Math.abs(fast.l_rel / ref.l_rel - 1)).toBeLessThan(1e-9);
    expect(Math.abs(fast.q_rel / ref.q_rel - 1)).toBeLessThan(1e-9);
  });

  it("stops at the tester's edge buffer", () => {
    const c = { ...cases[0], a0_v: 20, alpha_per_s: 10, wd_rad_s: 2 * Math.PI * 1e5, max_edges: 100 };
    expect(predictedRingBound(c).edges).toBe(100);
    expect(reference(c).edges).toBe(100);
  });

  it("works out a bound once for the same inputs and serves it again", () => {
    const c = { ...cases[1], a0_v: cases[1].a0_v * 1.000001 };
    const before = { ...rangingWork };
    const first = predictedRingBound(c);
    const again = predictedRingBound({ ...c });
    expect(again).toEqual(first);
    expect(rangingWork.bounds_computed - before.bounds_computed).toBe(1);
    expect(rangingWork.bounds_reused - before.bounds_reused).toBe(1);
  });
});
