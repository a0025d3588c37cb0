// The GUM example of docs/method.md §5 (computed; JCGM 100:2008 and JCGM 101:2008):
// C = 1.000 nF ±1 % rectangular, f = 159 154.94 Hz with ±100 ppm rectangular timebase.

import { describe, expect, it } from "vitest";
import { propagate, rectangularU } from "./gum-propagation.ts";
import { monteCarlo, standardUncertaintyAgrees } from "./monte-carlo.ts";
import { combineBudget } from "./uncertainty-budget.ts";

const C = 1e-9;
const F = 159_154.94;
const model = (x: number[]) => [1 / ((2 * Math.PI * x[0] * x[1]) ** 2 * x[2])];

describe("GUM example (docs/method.md §5)", () => {
  const inputs = [
    { name: "f", value: F, u: 0, group: "fit" },
    { name: "timebase", value: 1, u: rectangularU(100e-6), group: "timebase" },
    { name: "C", value: C, u: rectangularU(0.01 * C), group: "capacitance" },
  ];

  it("law of propagation: L = 1.0000 mH, u_rel = 0.57747 %, U(k=2) = 11.55 µH", () => {
    const [l] = propagate(model, inputs);
    expect(l.value * 1e3).toBeCloseTo(1.0, 4);
    expect((l.u / l.value) * 100).toBeCloseTo(0.57747, 4);
    expect(2 * l.u * 1e6).toBeCloseTo(11.55, 2);
  });

  it("the budget combines the same lines to the same U", () => {
    const b = combineBudget("apparent", 1e-3, [
      { group: "fit", rel_u: 0, note: "" },
      { group: "capacitance", rel_u: 0.01 / Math.sqrt(3), note: "" },
      { group: "timebase", rel_u: (2 * 100e-6) / Math.sqrt(3), note: "" },
      { group: "self-capacitance", rel_u: 0, note: "" },
    ]);
    expect(b.expanded_h * 1e6).toBeCloseTo(11.55, 2);
  });

  it("JCGM 101:2008 Monte Carlo, 2e6 seeded draws: sd 0.5778 %, 95 % interval [-0.941 %, +0.959 %]", () => {
    const mc = monteCarlo(model, [
      { kind: "normal", mean: F, sd: 0 },
      { kind: "rectangular", mean: 1, half_width: 100e-6 },
      { kind: "rectangular", mean: C, half_width: 0.01 * C },
    ], 2_000_000, 2008);
    const l0 = model([F, 1, C])[0];
    expect((mc.sd / l0) * 100).toBeCloseTo(0.5778, 3);
    expect((mc.low95 / l0 - 1) * 100).toBeCloseTo(-0.941, 2);
    expect((mc.high95 / l0 - 1) * 100).toBeCloseTo(0.959, 2);
    // The linear propagation is validated to two significant digits of u (JCGM 101:2008 §8).
    const [l] = propagate(model, inputs);
    expect(standardUncertaintyAgrees(l.u, mc, 2).agrees).toBe(true);
  });
});
