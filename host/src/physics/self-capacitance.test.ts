import { describe, expect, it } from "vitest";
import { MEDHURST_TABLE, medhurstH, medhurstSelfCapacitanceF } from "./self-capacitance.ts";

describe("Medhurst's shape factor H", () => {
  it("returns the table values of Medhurst's table exactly", () => {
    // Medhurst, Wireless Engineer 24, 1947, table read in the source.
    const quoted: [number, number][] = [[0.5, 0.5], [1, 0.46], [2, 0.5], [4, 0.72], [10, 1.32]];
    for (const [lOverD, h] of quoted) {
      expect(medhurstH(lOverD)).toEqual({ h, from_memory: false });
    }
  });

  it("returns the second-hand quotation of the table for l/D = 1.5 … 5", () => {
    // Medhurst's table as quoted by M. S. Rzeszotarski (Tesla-coil mailing list, 1997).
    expect(medhurstH(3).h).toBe(0.61);
    expect(medhurstH(5).h).toBe(0.81);
    expect(medhurstH(3).from_memory).toBe(false);
  });

  it("flags interpolation that uses from-memory rows", () => {
    // Rows for l/D < 0.5 and 0.6 … 0.9 are values from memory.
    expect(medhurstH(0.3)).toEqual({ h: 0.6, from_memory: true });
    expect(medhurstH(0.75).from_memory).toBe(true);
    expect(medhurstH(7).from_memory).toBe(false);
  });

  it("interpolates linearly between rows", () => {
    // Interpolation rule of this module (no source): midway between the l/D = 5 and 10 rows.
    expect(medhurstH(7.5).h).toBeCloseTo((0.81 + 1.32) / 2, 12);
  });

  it("is continuous, and rises monotonically above l/D = 1", () => {
    // Shape of Medhurst's table (rows 1 → 2 → 4 → 10 rise); no further source.
    let prev = medhurstH(1).h;
    for (let x = 1.01; x <= 10; x += 0.01) {
      const h = medhurstH(x).h;
      expect(h).toBeGreaterThanOrEqual(prev - 1e-12);
      expect(h - prev).toBeLessThan(0.002);
      prev = h;
    }
  });

  it("keeps its table sorted and every row labelled", () => {
    for (let i = 1; i < MEDHURST_TABLE.length; i++) {
      expect(MEDHURST_TABLE[i].l_over_d).toBeGreaterThan(MEDHURST_TABLE[i - 1].l_over_d);
    }
    expect(MEDHURST_TABLE.every((r) => ["notes", "secondary", "memory"].includes(r.source))).toBe(true);
  });

  it("refuses ratios outside the table", () => {
    expect(() => medhurstH(0.05)).toThrow(RangeError);
    expect(() => medhurstH(12)).toThrow(/lengthOverDiameter/);
    expect(() => medhurstH(Number.NaN)).toThrow(/lengthOverDiameter/);
  });
});

describe("Medhurst self-capacitance", () => {
  it("gives 7.2 pF for D = 10 cm, l/D = 4 (Medhurst 1947, Wireless Engineer 24)", () => {
    const cs = medhurstSelfCapacitanceF({ mean_diameter_m: 0.1, length_m: 0.4 });
    expect(cs).toBeCloseTo(7.2e-12, 18);
  });

  it("scales with diameter at fixed shape", () => {
    // Cs = H · D: proportional to size (Medhurst 1947).
    const a = medhurstSelfCapacitanceF({ mean_diameter_m: 0.02, length_m: 0.04 });
    const b = medhurstSelfCapacitanceF({ mean_diameter_m: 0.04, length_m: 0.08 });
    expect(b / a).toBeCloseTo(2, 12);
  });

  it("refuses bad outlines, naming the parameter", () => {
    expect(() => medhurstSelfCapacitanceF({ mean_diameter_m: 0, length_m: 0.1 })).toThrow(/mean_diameter_m/);
    expect(() => medhurstSelfCapacitanceF({ mean_diameter_m: 0.1, length_m: -1 })).toThrow(RangeError);
    expect(() => medhurstSelfCapacitanceF({ mean_diameter_m: 0.1, length_m: "1" as unknown as number })).toThrow(TypeError);
    expect(() => medhurstSelfCapacitanceF(null as unknown as { mean_diameter_m: number; length_m: number })).toThrow(TypeError);
  });
});
