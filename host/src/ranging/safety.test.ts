import { describe, expect, it } from "vitest";
import { flybackEnergyJ, flybackPeakV, HAZARDOUS_PEAK_V, otherWindingPeakV, resolvePeakLimit } from "./safety.ts";

describe("flyback safety figures", () => {
  it("50 mH on 10 nF released at 20 mA peaks near 44.7 V (I0 sqrt(L/C), standard circuit theory, computed)", () => {
    expect(flybackPeakV(50e-3, 10e-9, 20e-3)).toBeCloseTo(44.72, 2);
  });

  it("the same current in 1 H on 100 pF gives 2 kV by I0 sqrt(L/C) (standard circuit theory, computed; 5 kV would need 50 mA)", () => {
    expect(flybackPeakV(1, 100e-12, 20e-3)).toBeCloseTo(2000, 6);
    expect(flybackPeakV(1, 100e-12, 50e-3)).toBeCloseTo(5000, 6);
  });

  it("a 230 V : 12 V transformer pulsed on its 12 V side at 44.7 V shows about 850 V on the mains side (turns ratio times the pulsed winding's peak, computed)", () => {
    expect(otherWindingPeakV(44.7, 230 / 12)).toBeCloseTo(856.75, 1);
  });

  it("stores 10 µJ in 50 mH at 20 mA (½ L I², standard circuit theory)", () => {
    expect(flybackEnergyJ(50e-3, 20e-3)).toBeCloseTo(10e-6, 12);
  });

  it("reduces the first peak by e^(-pi / 4Q) (quarter-period decay, standard circuit theory)", () => {
    expect(flybackPeakV(1e-3, 1e-9, 1e-3, 10) / flybackPeakV(1e-3, 1e-9, 1e-3)).toBeCloseTo(Math.exp(-Math.PI / 40), 12);
  });
});

describe("ring-peak limit", () => {
  it("defaults to 30 V or 80 % of the clamp, whichever is lower", () => {
    expect(resolvePeakLimit(undefined, 36, false)).toMatchObject({ ok: true, limit_v: 28.8 });
    expect(resolvePeakLimit(undefined, 100, false)).toMatchObject({ ok: true, limit_v: 30 });
  });
  it("with a turns ratio, divides the pulsed winding's limit so the other winding (ratio × pulse) stays under it", () => {
    const r = resolvePeakLimit(undefined, 36, false, { other_winding_ratio: 19 });
    expect(r).toMatchObject({ ok: true, winding_limit_v: 28.8, other_winding_ratio: 19 });
    expect(otherWindingPeakV(r.limit_v, 19)).toBeCloseTo(28.8, 9);
    expect(r.basis.join("\n")).toMatch(/1\.52 V = 28\.8 V \/ 19/);
    // A ratio at or below 1 (the other winding has fewer turns) changes nothing.
    expect(resolvePeakLimit(undefined, 36, false, { other_winding_ratio: 0.5 }).limit_v).toBe(28.8);
    expect(resolvePeakLimit(undefined, 36, false, { other_winding_ratio: 0 }).ok).toBe(false);
  });
  it("says where each figure comes from: 80 % of the clamp, the probe's 70 % share, and that consent cannot pass a 36 V clamp", () => {
    const text = resolvePeakLimit(undefined, 36, false).basis.join("\n");
    expect(text).toMatch(/28\.8 V = 80 % of this tester's 36 V flyback clamp/);
    expect(text).toMatch(/20\.2 V: 70 % of the limit/);
    expect(text).toMatch(/hazardous_ok cannot take effect on this tester/);
    expect(resolvePeakLimit(undefined, 100, false).basis.join("\n")).not.toMatch(/cannot take effect/);
  });
  it("may be lowered freely", () => {
    expect(resolvePeakLimit(5, 36, false)).toMatchObject({ ok: true, limit_v: 5 });
  });
  it("may not be raised past the clamp", () => {
    expect(resolvePeakLimit(40, 36, true).ok).toBe(false);
  });
  it("needs explicit consent above the hazardous-live level of IEC 61010-1 (42.4 V peak, value from memory)", () => {
    expect(HAZARDOUS_PEAK_V).toBe(42.4);
    const refused = resolvePeakLimit(60, 100, false);
    expect(refused.ok).toBe(false);
    expect(refused.message).toMatch(/confirm with hazardous_ok only if/);
    expect(resolvePeakLimit(60, 100, true)).toMatchObject({ ok: true, limit_v: 60 });
  });
});
