import { describe, expect, it } from "vitest";
import {
  MU0_H_PER_M,
  completeEllipticIntegrals,
  longSolenoidInductanceH,
  nagaokaCoefficient,
  nagaokaInductanceH,
  wheelerInductanceH,
} from "./solenoid.ts";

const rel = (a: number, b: number) => Math.abs(a / b - 1);

// Worked example: 10 turns, mean diameter 15 mm, length 10 mm.
const NOTES_COIL = { turns: 10, mean_diameter_m: 15e-3, length_m: 10e-3 };

describe("complete elliptic integrals (AGM)", () => {
  it("matches K(m = 1/2) and E(m = 1/2)", () => {
    // Abramowitz and Stegun, Table 17.1 (value from memory; SciPy 1.17 ellipk/ellipe agree to
    // all digits); K(1/√2) = Γ(1/4)² / (4 √π).
    const r = completeEllipticIntegrals(Math.SQRT1_2);
    expect(rel(r.k_first, 1.8540746773013719)).toBeLessThan(1e-14);
    expect(rel(r.e_second, 1.3506438810476755)).toBeLessThan(1e-14);
  });

  it("satisfies Legendre's relation E K' + E' K − K K' = π/2", () => {
    // Legendre's relation, Abramowitz and Stegun 17.3.13 (equation number from memory).
    for (const k of [0.1, 0.5, 0.8, 0.99, 0.999999]) {
      const kc = Math.sqrt(1 - k * k);
      const a = completeEllipticIntegrals(k, kc);
      const b = completeEllipticIntegrals(kc, k);
      const lhs = a.e_second * b.k_first + b.e_second * a.k_first - a.k_first * b.k_first;
      expect(Math.abs(lhs - Math.PI / 2)).toBeLessThan(1e-13);
    }
  });

  it("gives K = E = π/2 at k = 0 and K − E ≈ π k²/4 for small k", () => {
    // Series K ≈ π/2 (1 + k²/4), E ≈ π/2 (1 − k²/4) (Abramowitz and Stegun 17.3.11–12,
    // equation numbers from memory).
    const z = completeEllipticIntegrals(0);
    expect(z.k_first).toBe(Math.PI / 2);
    expect(z.e_second).toBe(Math.PI / 2);
    const s = completeEllipticIntegrals(1e-6);
    expect(rel(s.k_minus_e, (Math.PI * 1e-12) / 4)).toBeLessThan(1e-9);
  });

  it("refuses a modulus outside [0, 1)", () => {
    expect(() => completeEllipticIntegrals(1)).toThrow(RangeError);
    expect(() => completeEllipticIntegrals(-0.1)).toThrow(/k must/);
    expect(() => completeEllipticIntegrals("0.5" as unknown as number)).toThrow(TypeError);
  });
});

describe("Nagaoka's coefficient", () => {
  it("reproduces the Nagaoka coefficient K = 0.59505 for 15 mm x 10 mm (computed)", () => {
    expect(nagaokaCoefficient(10 / 15)).toBeCloseTo(0.59505, 5);
  });

  it("matches tabulated values at l/D = 0.5, 1, 2, 10", () => {
    // Nagaoka / Rosa and Grover tables, 4 decimals (value from memory); the same digits come
    // out of SciPy 1.17 scipy.special.ellipk/ellipe with the formula in solenoid.ts.
    expect(nagaokaCoefficient(0.5)).toBeCloseTo(0.5255, 4);
    expect(nagaokaCoefficient(1)).toBeCloseTo(0.6884, 4);
    expect(nagaokaCoefficient(2)).toBeCloseTo(0.8181, 4);
    expect(nagaokaCoefficient(10)).toBeCloseTo(0.9588, 4);
    // SciPy 1.17 reference, full precision (computed during development).
    expect(rel(nagaokaCoefficient(1), 0.6884226073203769)).toBeLessThan(1e-13);
    expect(rel(nagaokaCoefficient(0.1), 0.20332351752191274)).toBeLessThan(1e-12);
  });

  it("tends to 1 for long coils, following 1 − 8a/(3π) + a²/2 with a = r/l", () => {
    // Long-coil expansion of the current-sheet inductance (Rosa and Grover 1912; value from memory),
    // its error is O(a⁴) so it must close in quickly as l/D grows.
    for (const lOverD of [50, 100, 1e3, 1e6]) {
      const a = 1 / (2 * lOverD);
      const expansion = 1 - (8 * a) / (3 * Math.PI) + (a * a) / 2;
      expect(Math.abs(nagaokaCoefficient(lOverD) - expansion)).toBeLessThan(2 * a ** 4 + 1e-15);
    }
    expect(nagaokaCoefficient(1e12)).toBeCloseTo(1, 12);
  });

  it("rises monotonically with l/D and stays in (0, 1)", () => {
    // Physical requirement: end effects shrink as the coil lengthens (no source needed).
    let prev = 0;
    for (let x = 0.01; x < 200; x *= 1.1) {
      const k = nagaokaCoefficient(x);
      expect(k).toBeGreaterThan(prev);
      expect(k).toBeLessThan(1);
      prev = k;
    }
  });
});

describe("solenoid inductance", () => {
  it("reproduces the Wheeler 1928 / Nagaoka worked example (computed)", () => {
    // Wheeler 1928 formula → 1.3221 µH; Nagaoka current sheet → 1.3214 µH.
    expect(wheelerInductanceH(NOTES_COIL) * 1e6).toBeCloseTo(1.3221, 4);
    expect(nagaokaInductanceH(NOTES_COIL) * 1e6).toBeCloseTo(1.3214, 4);
  });

  it("approaches µ0 N² A / l for a long solenoid", () => {
    // Ampère's law for an infinite solenoid (standard electromagnetism, no further source).
    const g = { turns: 2000, mean_diameter_m: 0.01, length_m: 10 };
    // l/D = 1000: the end correction 8r/(3πl) is 4.2e-4, so the two agree to better than 1e-3.
    expect(rel(nagaokaInductanceH(g), longSolenoidInductanceH(g))).toBeLessThan(1e-3);
    expect(nagaokaInductanceH(g)).toBeLessThan(longSolenoidInductanceH(g));
    expect(longSolenoidInductanceH(g)).toBeCloseTo((MU0_H_PER_M * 4e6 * Math.PI * 25e-6) / 10, 15);
  });

  it("Wheeler agrees with Nagaoka within 1 % for l > 0.8 r", () => {
    // Wheeler 1928 states about 1 % accuracy for coils longer than 0.8 radius.
    for (const lOverD of [0.4, 0.5, 1, 2, 5, 20, 100]) {
      const g = { turns: 25, mean_diameter_m: 0.02, length_m: 0.02 * lOverD };
      expect(rel(wheelerInductanceH(g), nagaokaInductanceH(g))).toBeLessThan(0.01);
    }
  });

  it("scales as N² and grows with diameter, shrinks with length", () => {
    // Follows from the formula's form (no source needed).
    const base = nagaokaInductanceH(NOTES_COIL);
    expect(rel(nagaokaInductanceH({ ...NOTES_COIL, turns: 20 }), 4 * base)).toBeLessThan(1e-14);
    expect(nagaokaInductanceH({ ...NOTES_COIL, mean_diameter_m: 16e-3 })).toBeGreaterThan(base);
    expect(nagaokaInductanceH({ ...NOTES_COIL, length_m: 11e-3 })).toBeLessThan(base);
  });

  it("refuses bad geometry, naming the parameter", () => {
    expect(() => nagaokaInductanceH({ ...NOTES_COIL, turns: 0 })).toThrow(/turns/);
    expect(() => nagaokaInductanceH({ ...NOTES_COIL, turns: -3 })).toThrow(RangeError);
    expect(() => wheelerInductanceH({ ...NOTES_COIL, length_m: NaN })).toThrow(/length_m/);
    expect(() => wheelerInductanceH({ ...NOTES_COIL, mean_diameter_m: "15" as unknown as number })).toThrow(TypeError);
    expect(() => nagaokaInductanceH({ ...NOTES_COIL, mean_diameter_m: Infinity })).toThrow(/mean_diameter_m/);
    expect(() => nagaokaCoefficient(0)).toThrow(/lengthOverDiameter/);
  });
});
