// The numerically integrated front end against the exact closed form where both apply, and the
// nonlinear effects it exists for.

import { describe, expect, it } from "vitest";
import { solveRing, stateAtOpening } from "./front-end-circuit.ts";
import { nonlinearCrossings, differentialInductance } from "./nonlinear-ring.ts";
import { crossingTimes } from "../sim/comparator-edges.ts";

const choke = { l_h: 330e-6, rs_ohm: 0.42, rp_ohm: Infinity, c_f: 100.45e-9, csw_f: 18e-12, r_ohm: 100.4, supply_v: 5 };
const x0 = stateAtOpening(choke, 0.05, 0.35, 40e-6);

describe("nonlinear front end", () => {
  it("matches the exact linear solution when nothing is nonlinear (edge times within 1e-4 of a period)", () => {
    const exact = crossingTimes(solveRing(choke, x0), 0.0354, -0.0046, 100000, 1);
    const nl = nonlinearCrossings(choke, {}, [x0.i_a, x0.v_td_v], 0.0354, -0.0046, 100000, 1);
    expect(nl.times.length).toBe(exact.times.length);
    expect(nl.levels).toEqual(exact.levels);
    const period = 2 * Math.PI * Math.sqrt(choke.l_h * choke.c_f);
    const worst = Math.max(...nl.times.map((t, i) => Math.abs(t - exact.times[i])));
    expect(worst / period).toBeLessThan(1e-4);
    expect(nl.clamped).toBe(false);
  });

  it("shortens the period while a saturating core carries more current", () => {
    const nl = nonlinearCrossings(choke, { saturation_a: 0.03, saturation_floor: 0.3 }, [x0.i_a, x0.v_td_v], 0.0354, -0.0046, 100000, 1);
    const rises = nl.times.filter((_, i) => nl.levels[i] === 1);
    const first = rises[1] - rises[0];
    const last = rises[rises.length - 1] - rises[rises.length - 2];
    expect(first).toBeLessThan(last * 0.99);
    // The strong first period is the shortest: L(i) is lowest where the current peaks. The small
    // signal period 2 pi sqrt(L0 C) bounds every period from below only in the tail.
    const smallSignal = 2 * Math.PI * Math.sqrt(choke.l_h * (choke.c_f + choke.csw_f));
    expect(first).toBeLessThan(smallSignal);
  });

  it("lengthens the period at high ring voltage with a class II tank (C falls with v)", () => {
    const strong = { ...choke, r_ohm: 10 };
    const s0 = stateAtOpening(strong, 0.05, 0.35, 100e-6);
    const nl = nonlinearCrossings(strong, { tank_k_per_v2: 0.004 }, [s0.i_a, s0.v_td_v], 0.0354, -0.0046, 100000, 1);
    const rises = nl.times.filter((_, i) => nl.levels[i] === 1);
    expect(rises[1] - rises[0]).toBeLessThan(rises[rises.length - 1] - rises[rises.length - 2]);
  });

  it("holds the ring near the clamp when the flyback would exceed it", () => {
    const nl = nonlinearCrossings({ ...choke, r_ohm: 10 }, { clamp_v: 5, clamp_ohm: 1 }, [0.45, 0], 0.0354, -0.0046, 100000, 1);
    expect(nl.clamped).toBe(true);
    // Unclamped the peak would be 0.45 A * sqrt(L/C) = 25.8 V; a 1 ohm clamp lets it overshoot only a little.
    expect(nl.peak_v).toBeGreaterThan(5);
    expect(nl.peak_v).toBeLessThan(6);
  });

  it("keeps the differential inductance between its floor and L0", () => {
    const nl = { saturation_a: 1, saturation_floor: 0.2 };
    expect(differentialInductance(1e-3, nl, 0)).toBe(1e-3);
    expect(differentialInductance(1e-3, nl, 1)).toBeCloseTo(0.6e-3, 12);
    expect(differentialInductance(1e-3, nl, 1e6)).toBeCloseTo(0.2e-3, 9);
  });
});
