import { describe, expect, it } from "vitest";
import { fitWindingModel, predictInductance, windingAdvice } from "./winding.ts";

// Winding arithmetic. With a fixed geometry L ∝ N² (e.g. Wheeler 1928, docs/method.md §7:
// L = r²N²/(9r + 10l) at fixed r, l), so one reading at N1 gives N = N1 sqrt(L_target / L1).
describe("winding advice", () => {
  it("one reading: the N² rule (30 turns, 13.5 µH, target 22 µH → 38.30 turns, add 8)", () => {
    const a = windingAdvice([{ turns: 30, inductance_h: 13.5e-6, inductance_u_h: 0.15e-6 }], 22e-6);
    expect(a.turns_for_target).toBeCloseTo(30 * Math.sqrt(22 / 13.5), 6); // 38.297
    expect(a.recommended_turns).toBe(38);
    expect(a.turns_to_change).toBe(8);
    expect(a.predicted_h).toBeCloseTo(13.5e-6 * (38 / 30) ** 2, 12);
    expect(a.last.error_rel).toBeCloseTo(13.5 / 22 - 1, 12);
  });

  it("removes turns when the coil is over the target", () => {
    const a = windingAdvice([{ turns: 50, inductance_h: 25e-6, inductance_u_h: 0.2e-6 }], 22e-6);
    expect(a.turns_for_target).toBeCloseTo(50 * Math.sqrt(22 / 25), 6); // 46.90
    expect(a.turns_to_change).toBe(-3);
  });

  it("readings on an exact N² law keep the exponent at 2", () => {
    const rs = [20, 30, 40].map((n) => ({ turns: n, inductance_h: 1e-8 * n * n, inductance_u_h: 1e-8 * n * n * 0.01 }));
    const m = fitWindingModel(rs);
    expect(m.exponent).toBeCloseTo(2, 9);
    expect(m.a_h).toBeCloseTo(1e-8, 15);
  });

  it("readings on an N^1.3 law (a close-wound coil growing longer) move the exponent there", () => {
    const law = (n: number) => 2e-7 * n ** 1.3;
    const rs = [20, 30, 38, 42].map((n) => ({ turns: n, inductance_h: law(n), inductance_u_h: law(n) * 0.002 }));
    const a = windingAdvice(rs, law(45));
    expect(a.model.exponent).toBeGreaterThan(1.29);
    expect(a.model.exponent).toBeLessThan(1.35);
    expect(a.recommended_turns).toBe(45);
    expect(Math.abs(predictInductance(a.model, 45) / law(45) - 1)).toBeLessThan(0.003);
  });

  it("says whether the last reading conforms to the target tolerance", () => {
    const a = windingAdvice([{ turns: 43, inductance_h: 21.9e-6, inductance_u_h: 0.25e-6 }], 22e-6, { lower: 21.56e-6, upper: 22.44e-6 });
    expect(a.last.decision).toBe("conforming");
  });

  it("says when the advice lies far beyond the counts measured, or beyond the former's turns", () => {
    const near = windingAdvice([{ turns: 30, inductance_h: 13.5e-6, inductance_u_h: 0.15e-6 }], 22e-6);
    expect(near.reach).toMatchObject({ measured_turns: [30, 30], concern: null });
    expect(near.reach.extrapolation).toBeCloseTo(38.297 / 30, 3);
    // 200 µH from 13.5 µH at 30 turns: N² gives 30 √(200/13.5) = 115.5 turns, 3.85× the count measured.
    const far = windingAdvice([{ turns: 30, inductance_h: 13.5e-6, inductance_u_h: 0.15e-6 }], 200e-6);
    expect(far.reach.extrapolation).toBeCloseTo((30 * Math.sqrt(200 / 13.5)) / 30, 6);
    expect(far.reach.concern).toBe("far-extrapolation");
    // Inside the readings on both sides: no extrapolation at all.
    const inside = windingAdvice([30, 50].map((n) => ({ turns: n, inductance_h: 1.5e-8 * n * n, inductance_u_h: 1.5e-10 * n * n })), 1.5e-8 * 40 * 40);
    expect(inside.reach.extrapolation).toBe(1);
    // A former that takes at most 100 turns cannot reach a target that needs 115.
    const former = windingAdvice([{ turns: 30, inductance_h: 13.5e-6, inductance_u_h: 0.15e-6 }], 200e-6, undefined, { min: 4, max: 100 });
    expect(former.reach).toMatchObject({ concern: "beyond-former", former_turns: { min: 4, max: 100 } });
  });

  it("refuses non-positive input", () => {
    expect(() => windingAdvice([], 1e-6)).toThrow(RangeError);
    expect(() => windingAdvice([{ turns: 0, inductance_h: 1e-6, inductance_u_h: 0 }], 1e-6)).toThrow(RangeError);
  });
});
