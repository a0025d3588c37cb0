import { describe, expect, it } from "vitest";
import { airCoreCoil } from "./coil-design.ts";
import { awgDiameterM, copperDcOhmPerM } from "./copper-wire.ts";
import { medhurstSelfCapacitanceF } from "./self-capacitance.ts";

const rel = (a: number, b: number) => Math.abs(a / b - 1);
// A Wheeler 1928 / Nagaoka worked example (computed; Wheeler value from memory), wound with AWG 20 at 1 mm pitch.
const NOTES_COIL = { turns: 10, mean_diameter_m: 15e-3, length_m: 10e-3, awg: 20 };

describe("airCoreCoil", () => {
  it("reproduces the Wheeler 1928 / Nagaoka inductances (computed)", () => {
    // Nagaoka 1.3214 µH (K = 0.59505), Wheeler 1928 1.3221 µH.
    const c = airCoreCoil(NOTES_COIL);
    expect(c.inductance_h * 1e6).toBeCloseTo(1.3214, 4);
    expect(c.wheeler_inductance_h * 1e6).toBeCloseTo(1.3221, 4);
    expect(c.notes[0]).toContain("K = 0.59505");
  });

  it("gives Medhurst's 7.2 pF for D = 10 cm, l/D = 4 (Medhurst 1947, Wireless Engineer 24)", () => {
    const c = airCoreCoil({ turns: 200, mean_diameter_m: 0.1, length_m: 0.4, awg: 18 });
    expect(c.self_capacitance_f).toBeCloseTo(7.2e-12, 18);
    expect(c.notes[1]).not.toContain("memory");
  });

  it("agrees with medhurstSelfCapacitanceF and flags from-memory table rows", () => {
    const c = airCoreCoil(NOTES_COIL);
    expect(c.self_capacitance_f).toBe(medhurstSelfCapacitanceF(NOTES_COIL));
    expect(c.notes[1]).toContain("from memory"); // l/D = 0.67 lies between memory rows
  });

  it("measures the wire along the helix", () => {
    // Geometry of a helix (no source): N · sqrt((π D)² + p²).
    const c = airCoreCoil(NOTES_COIL);
    expect(c.wire_length_m).toBeCloseTo(10 * Math.hypot(Math.PI * 15e-3, 1e-3), 15);
    expect(c.dc_ohm).toBeCloseTo(c.wire_length_m * copperDcOhmPerM(awgDiameterM(20)), 15);
    expect(c.series_ohm).toBe(c.dc_ohm);
  });

  it("accepts a bare diameter in place of a gauge", () => {
    const byGauge = airCoreCoil(NOTES_COIL);
    const byDiameter = airCoreCoil({ turns: 10, mean_diameter_m: 15e-3, length_m: 10e-3, wire_diameter_m: awgDiameterM(20) });
    expect(byDiameter.series_ohm).toBe(byGauge.series_ohm);
    expect(byDiameter.wire_diameter_m).toBe(byGauge.wire_diameter_m);
  });

  it("raises resistance with temperature by the IEC 60028 coefficient", () => {
    const warm = airCoreCoil({ ...NOTES_COIL, temperature_c: 70 });
    expect(warm.series_ohm / airCoreCoil(NOTES_COIL).series_ohm).toBeCloseTo(1 + 50 * 0.00393, 12);
  });

  it("adds skin effect when a frequency is given, and says it is a lower bound", () => {
    const hf = airCoreCoil({ ...NOTES_COIL, resistance_frequency_hz: 10e6 });
    expect(hf.series_ohm).toBeGreaterThan(3 * hf.dc_ohm); // r/δ ≈ 19.6 → ratio ≈ 10
    expect(hf.notes[2]).toContain("proximity effect");
    expect(hf.inductance_h).toBe(airCoreCoil(NOTES_COIL).inductance_h);
  });

  it("warns when Wheeler's formula is outside its range", () => {
    const flat = airCoreCoil({ turns: 5, mean_diameter_m: 0.05, length_m: 0.006, awg: 22 });
    expect(flat.notes.some((n) => n.includes("outside its stated 1 % range"))).toBe(true);
  });

  it("refuses bad specs, naming the parameter", () => {
    expect(() => airCoreCoil({ ...NOTES_COIL, wire_diameter_m: 1e-3 })).toThrow(/exactly one/);
    expect(() => airCoreCoil({ turns: 10, mean_diameter_m: 15e-3, length_m: 10e-3 })).toThrow(TypeError);
    expect(() => airCoreCoil({ ...NOTES_COIL, awg: 14 })).toThrow(/length_m .* too short/);
    expect(() => airCoreCoil({ ...NOTES_COIL, turns: 0 })).toThrow(/turns/);
    expect(() => airCoreCoil({ ...NOTES_COIL, turns: "10" as unknown as number })).toThrow(TypeError);
    expect(() => airCoreCoil({ ...NOTES_COIL, length_m: 0.2 })).toThrow(/outside Medhurst/);
    expect(() => airCoreCoil({ ...NOTES_COIL, temperature_c: 500 })).toThrow(/temperature_c/);
    expect(() => airCoreCoil({ ...NOTES_COIL, resistance_frequency_hz: -1 })).toThrow(/resistance_frequency_hz/);
    expect(() => airCoreCoil({ turns: 2, mean_diameter_m: 1e-3, length_m: 4e-3, wire_diameter_m: 1.5e-3 })).toThrow(/wire_diameter_m/);
    expect(() => airCoreCoil(undefined as unknown as typeof NOTES_COIL)).toThrow(TypeError);
  });
});
