import { describe, expect, it } from "vitest";
import { conformanceProbability, decideConformity, normalCdf } from "./conformity.ts";

describe("ISO 14253-1 conformity decisions", () => {
  const spec = { lower: 9.5e-6, upper: 10.5e-6 }; // 10 µH ±5 %

  it("ISO 14253-1:2017 decision rule, normal model, computed: 10 µH ±5 %, 10.42 µH, U = 0.10 µH → inconclusive, P = 0.94520", () => {
    const r = decideConformity(10.42e-6, 0.1e-6, spec);
    expect(r.decision).toBe("inconclusive");
    // Reproduced here: u = U/2 = 0.05 µH, P = Φ((10.5 - 10.42)/0.05) - Φ((9.5 - 10.42)/0.05) = Φ(1.6) - Φ(-18.4).
    expect(r.p_conform).toBeCloseTo(0.9452, 4);
    expect(Math.round(r.p_conform * 1e5) / 1e5).toBe(0.9452);
  });

  it("proves conformity inside the tolerance shrunk by U, nonconformity outside it widened by U", () => {
    const U = 0.1e-6;
    expect(decideConformity(10.0e-6, U, spec).decision).toBe("conforming");
    expect(decideConformity(10.4e-6, U, spec).decision).toBe("conforming"); // on the zone's edge
    expect(decideConformity(10.401e-6, U, spec).decision).toBe("inconclusive");
    expect(decideConformity(10.6e-6, U, spec).decision).toBe("inconclusive"); // on the widened limit
    expect(decideConformity(10.601e-6, U, spec).decision).toBe("nonconforming");
    expect(decideConformity(9.39e-6, U, spec).decision).toBe("nonconforming");
    expect(decideConformity(9.55e-6, U, spec).decision).toBe("inconclusive");
  });

  it("never proves conformity when U exceeds half the tolerance width", () => {
    expect(decideConformity(10e-6, 0.6e-6, spec).decision).toBe("inconclusive");
  });

  it("with U = 0 the decision is the plain tolerance check", () => {
    expect(decideConformity(10.5e-6, 0, spec).decision).toBe("conforming");
    expect(decideConformity(10.51e-6, 0, spec).decision).toBe("nonconforming");
    expect(conformanceProbability(10.5e-6, 0, spec)).toBe(1);
  });

  it("normal distribution function matches standard normal tables (e.g. Abramowitz & Stegun table 26.1)", () => {
    expect(normalCdf(0)).toBeCloseTo(0.5, 7);
    expect(normalCdf(1)).toBeCloseTo(0.8413447, 6);
    expect(normalCdf(1.6)).toBeCloseTo(0.9452007, 6);
    expect(normalCdf(1.959964)).toBeCloseTo(0.975, 6);
    expect(normalCdf(-3)).toBeCloseTo(0.0013499, 6);
  });

  it("refuses nonsense", () => {
    expect(() => decideConformity(NaN, 1, spec)).toThrow(RangeError);
    expect(() => decideConformity(1, -1, spec)).toThrow(RangeError);
    expect(() => decideConformity(1, 1, { lower: 2, upper: 1 })).toThrow(RangeError);
  });
});
