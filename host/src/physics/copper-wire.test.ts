import { describe, expect, it } from "vitest";
import {
  COPPER_RESISTIVITY_OHM_M_20C,
  awgDiameterM,
  copperAcOhmPerM,
  copperDcOhmPerM,
  copperResistivityOhmM,
  copperSkinDepthM,
  skinEffectRatio,
} from "./copper-wire.ts";

const rel = (a: number, b: number) => Math.abs(a / b - 1);
const MIL_M = 25.4e-6;

describe("AWG diameters (ASTM B258)", () => {
  it("hits the defining end points exactly: 0000 = 0.4600 in, 36 = 0.0050 in", () => {
    // ASTM B258 definition of the gauge.
    expect(rel(awgDiameterM(-3), 460 * MIL_M)).toBeLessThan(1e-14);
    expect(rel(awgDiameterM(36), 5 * MIL_M)).toBeLessThan(1e-14);
  });

  it("matches the rounded table values for AWG 10, 20, 30", () => {
    // ASTM B258 table, 101.9 / 31.96 / 10.03 mil (value from memory); table rounding < 0.05 %.
    expect(rel(awgDiameterM(10), 101.9 * MIL_M)).toBeLessThan(5e-4);
    expect(rel(awgDiameterM(20), 31.96 * MIL_M)).toBeLessThan(5e-4);
    expect(rel(awgDiameterM(30), 10.03 * MIL_M)).toBeLessThan(5e-4);
  });

  it("shrinks by a factor 92^(1/39) per gauge step and halves about every 6 gauges", () => {
    // Geometric series of ASTM B258; 92^(6/39) = 2.005 (common bench rule, no source).
    expect(awgDiameterM(20) / awgDiameterM(21)).toBeCloseTo(Math.pow(92, 1 / 39), 13);
    expect(awgDiameterM(14) / awgDiameterM(20)).toBeCloseTo(2.0050, 4);
  });

  it("refuses sizes that are not whole gauges in range", () => {
    expect(() => awgDiameterM(20.5)).toThrow(RangeError);
    expect(() => awgDiameterM(57)).toThrow(/awg/);
    expect(() => awgDiameterM(-4)).toThrow(/awg/);
    expect(() => awgDiameterM("20" as unknown as number)).toThrow(TypeError);
  });
});

describe("DC resistance (IEC 60028 annealed copper)", () => {
  it("uses 1/58 Ω·mm²/m at 20 °C", () => {
    // IEC 60028: 1/58 Ω·mm²/m rounded to 1.7241e-8 Ω·m.
    expect(COPPER_RESISTIVITY_OHM_M_20C).toBeCloseTo(1e-6 / 58, 12);
    expect(copperResistivityOhmM()).toBe(COPPER_RESISTIVITY_OHM_M_20C);
  });

  it("matches copper wire tables per 1000 ft for AWG 10, 20, 30", () => {
    // Copper wire tables at 20 °C: 0.9989, 10.15, 103.2 Ω/1000 ft (value from memory).
    const perKft = (awg: number) => copperDcOhmPerM(awgDiameterM(awg)) * 304.8;
    expect(rel(perKft(10), 0.9989)).toBeLessThan(1e-3);
    expect(rel(perKft(20), 10.15)).toBeLessThan(1e-3);
    expect(rel(perKft(30), 103.2)).toBeLessThan(1e-3);
  });

  it("rises by 0.393 %/K (IEC 60028)", () => {
    const d = awgDiameterM(20);
    expect(copperDcOhmPerM(d, 45) / copperDcOhmPerM(d, 20)).toBeCloseTo(1 + 25 * 0.00393, 12);
    expect(copperDcOhmPerM(d, 0)).toBeLessThan(copperDcOhmPerM(d, 20));
  });

  it("refuses bad diameters and temperatures, naming the parameter", () => {
    expect(() => copperDcOhmPerM(0)).toThrow(/wire_diameter_m/);
    expect(() => copperDcOhmPerM(1e-3, 300)).toThrow(/temperature_c/);
    expect(() => copperDcOhmPerM(1e-3, Number.NaN)).toThrow(RangeError);
    expect(() => copperDcOhmPerM(1e-3, "20" as unknown as number)).toThrow(TypeError);
  });
});

describe("skin effect in an isolated round wire", () => {
  it("gives a skin depth of about 66 µm in copper at 1 MHz", () => {
    // Common handbook figure, 66 µm at 1 MHz (value from memory); δ ∝ 1/√f.
    expect(copperSkinDepthM(1e6) * 1e6).toBeCloseTo(66.08, 1);
    expect(copperSkinDepthM(4e6) / copperSkinDepthM(1e6)).toBeCloseTo(0.5, 12);
  });

  it("matches the Bessel-function solution computed with mpmath", () => {
    // Re[(z/2) J0(z)/J1(z)], z = (1 − j) x, mpmath 1.3 at 30 digits (computed during development).
    const ref: [number, number][] = [
      [0.5, 1.00130072855579],
      [1, 1.02049238885562],
      [2, 1.26464290627321],
      [3, 1.76813165250974],
      [10, 5.2593018575108],
      [30, 15.253122586403],
      [99.999, 50.250437446783493],
      [100, 50.25093743741029],
    ];
    for (const [x, r] of ref) expect(rel(skinEffectRatio(x), r)).toBeLessThan(2e-9);
  });

  it("follows 1 + x⁴/48 at low frequency and d/(4δ) + 1/4 at high frequency", () => {
    // Ramo, Whinnery and Van Duzer, Fields and Waves, ch. 5 (value from memory for the forms).
    expect(skinEffectRatio(0.1)).toBeCloseTo(1 + 1e-4 / 48, 10); // next term is O(x⁸)
    expect(skinEffectRatio(1000)).toBeCloseTo(500.25, 3);
  });

  it("never falls below the DC resistance and rises with frequency", () => {
    // Physical requirement (no source): current crowding only adds loss.
    const d = awgDiameterM(18);
    let prev = copperDcOhmPerM(d);
    for (let f = 100; f < 1e9; f *= 1.5) {
      const r = copperAcOhmPerM(d, f);
      expect(r).toBeGreaterThanOrEqual(prev);
      prev = r;
    }
  });

  it("refuses a bad frequency", () => {
    expect(() => copperAcOhmPerM(1e-3, 0)).toThrow(/frequency_hz/);
    expect(() => skinEffectRatio(-1)).toThrow(/radiusOverSkinDepth/);
  });
});
