// The two-capacitance method against the worked example of docs/method.md §7 (values
// computed; method: Terman and Pettit, Electronic Measurements, 1952, from memory), and its
// propagated uncertainty against a JCGM 101:2008 Monte Carlo.

import { describe, expect, it } from "vitest";
import { monteCarlo, standardUncertaintyAgrees } from "./monte-carlo.ts";
import { ringFrequencyHz, solveTwoCapacitance, twoCapacitanceModel } from "./two-capacitance.ts";

const L = 10e-6;
const CS = 5e-12;
const C1 = 100e-12;
const C2 = 1000e-12;

describe("two-capacitance method (docs/method.md §7)", () => {
  it("reproduces the worked example's frequencies", () => {
    expect(ringFrequencyHz(L, C1, CS)).toBeCloseTo(4_911_628.2, 1);
    expect(ringFrequencyHz(L, C2, CS)).toBeCloseTo(1_587_585.4, 1);
  });

  it("inverts f1 = 4 911 628.2 Hz, f2 = 1 587 585.4 Hz to L = 10.000 µH, Cs = 5.000 pF, SRF = 22.508 MHz", () => {
    const r = solveTwoCapacitance({
      small: { f0_hz: 4_911_628.2, u_fit_hz: 1, c_f: C1, u_c_f: 0.1e-12 },
      large: { f0_hz: 1_587_585.4, u_fit_hz: 1, c_f: C2, u_c_f: 1e-12 },
      timebase_u_rel: 1e-6,
    });
    expect(r.inductance_h * 1e6).toBeCloseTo(10.0, 3);
    expect(r.self_capacitance_f * 1e12).toBeCloseTo(5.0, 3);
    expect(r.srf_hz! / 1e6).toBeCloseTo(22.508, 3);
  });

  it("+1 % in C1 gives Cs = 3.883 pF, and the sensitivity the result reports says the same", () => {
    const f1 = ringFrequencyHz(L, C1, CS);
    const f2 = ringFrequencyHz(L, C2, CS);
    const [, cs] = twoCapacitanceModel([f1, f2, 1, 1.01 * C1, C2, 1, 0]);
    expect(cs * 1e12).toBeCloseTo(3.883, 3);
    const r = solveTwoCapacitance({
      small: { f0_hz: f1, u_fit_hz: 0, c_f: C1, u_c_f: 0.5e-12 },
      large: { f0_hz: f2, u_fit_hz: 0, c_f: C2, u_c_f: 5e-12 },
      timebase_u_rel: 0,
    });
    expect(r.cs_per_percent.small_f * 1e12).toBeCloseTo(-1.117, 2);
  });

  it("refuses rings in the wrong order", () => {
    expect(() =>
      solveTwoCapacitance({
        small: { f0_hz: 1e6, u_fit_hz: 1, c_f: C1, u_c_f: 1e-13 },
        large: { f0_hz: 2e6, u_fit_hz: 1, c_f: C2, u_c_f: 1e-12 },
        timebase_u_rel: 0,
      }),
    ).toThrow(expect.objectContaining({ code: "NONSENSE_RESULT" }));
  });

  it("propagated u(L) and u(Cs) agree with a JCGM 101:2008 Monte Carlo (seeded, 2e5 draws)", () => {
    const f1 = ringFrequencyHz(L, C1, CS);
    const f2 = ringFrequencyHz(L, C2, CS);
    const input = {
      small: { f0_hz: f1, u_fit_hz: 20, c_f: C1, u_c_f: 0.2e-12 },
      large: { f0_hz: f2, u_fit_hz: 8, c_f: C2, u_c_f: 1.5e-12 },
      timebase_u_rel: 20e-6,
      shared_c_u_rel: 1e-3,
    };
    const r = solveTwoCapacitance(input);
    const dists = [
      { kind: "normal" as const, mean: f1, sd: 20 },
      { kind: "normal" as const, mean: f2, sd: 8 },
      { kind: "rectangular" as const, mean: 1, half_width: 20e-6 * Math.sqrt(3) },
      { kind: "normal" as const, mean: C1, sd: 0.2e-12 },
      { kind: "normal" as const, mean: C2, sd: 1.5e-12 },
      { kind: "normal" as const, mean: 1, sd: 1e-3 },
      { kind: "normal" as const, mean: 0, sd: 0 },
    ];
    const mcL = monteCarlo(twoCapacitanceModel, dists, 200_000, 42, 0);
    const mcCs = monteCarlo(twoCapacitanceModel, dists, 200_000, 43, 1);
    // Two significant digits (JCGM 101:2008 §8.2), with the sampling spread of 2e5 draws (~0.2 %).
    expect(standardUncertaintyAgrees(r.u.inductance_h, mcL, 2).agrees).toBe(true);
    expect(Math.abs(mcCs.sd / r.u.self_capacitance_f - 1)).toBeLessThan(0.02);
    expect(Math.abs(mcL.mean / r.inductance_h - 1)).toBeLessThan(1e-4);
  });
});
