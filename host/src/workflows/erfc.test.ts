import { describe, expect, it } from "vitest";
import { erfc, normalCdf, roundProbability } from "./conformity.ts";

// Reference values: mpmath 1.3.0 (Python), mp.dps = 40, mpmath.erfc and mpmath.ncdf, printed to
// 20 significant digits.
const ERFC_REF: [number, number][] = [
  [-6, 1.9999999999999999785],
  [-3, 1.9999779095030014146],
  [-1.5, 1.9661051464753107271],
  [-0.5, 1.5204998778130465377],
  [-1e-8, 1.000000011283791671],
  [0, 1.0],
  [1e-10, 9.9999999988716208329e-1],
  [0.125, 8.5968379519866618261e-1],
  [0.5, 4.7950012218695346232e-1],
  [0.75, 2.888443663464848684e-1],
  [0.9999, 1.5734072195124052658e-1],
  [1, 1.5729920705028513066e-1],
  [1.0001, 1.5725770045147966931e-1],
  [1.5, 3.3894853524689272933e-2],
  [2, 4.6777349810472658379e-3],
  [2.5, 4.0695201744495893956e-4],
  [3, 2.2090496998585441373e-5],
  [4, 1.5417257900280018852e-8],
  [5, 1.5374597944280348502e-12],
  [6, 2.1519736712498913117e-17],
  [8, 1.122429717298292708e-29],
  [10, 2.088487583762544757e-45],
  [15, 7.2129941724512066666e-100],
  [20, 5.3958656116079009289e-176],
  [26.5, 2.2109076642637342759e-307],
];

const PHI_REF: [number, number][] = [
  [-8, 6.2209605742717841235e-16],
  [-5, 2.8665157187919391167e-7],
  [-3, 1.3498980316300945267e-3],
  [-1.959963984540054, 2.5000000000000013765e-2],
  [-1, 1.5865525393145705141e-1],
  [0, 5.0e-1],
  [1, 8.4134474606854294859e-1],
  [1.644853626951472, 9.4999999999999992627e-1],
  [3, 9.9865010196836990547e-1],
  [5, 9.9999971334842812081e-1],
];

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe("erfc to double precision (reference: mpmath 1.3.0 at 40 digits)", () => {
  for (const [x, ref] of ERFC_REF) {
    it(`erfc(${x}) within 3e-15 relative`, () => {
      expect(rel(erfc(x), ref)).toBeLessThan(3e-15);
    });
  }

  it("the normal distribution function from it, within 1e-14 relative (z/sqrt 2 rounds once more)", () => {
    for (const [z, ref] of PHI_REF) expect(rel(normalCdf(z), ref)).toBeLessThan(1e-14);
  });

  it("is continuous where the series hands over to the continued fraction, decreasing, and erfc(-x) = 2 - erfc(x)", () => {
    const below = erfc(1 - 1e-12);
    const above = erfc(1 + 1e-12);
    // d/dx erfc = -(2/sqrt pi) e^(-x^2): the step across 2e-12 is 2e-12 * 0.415 (A&S 7.1.19).
    expect(rel(below - above, 2e-12 * (2 / Math.sqrt(Math.PI)) * Math.exp(-1))).toBeLessThan(1e-3);
    let prev = erfc(-7);
    for (let x = -7; x <= 27; x += 0.01) {
      const v = erfc(x);
      expect(v).toBeLessThanOrEqual(prev);
      prev = v;
    }
    for (const x of [0.3, 1, 2.2, 5]) expect(erfc(-x)).toBe(2 - erfc(x));
    expect(erfc(30)).toBe(0);
    expect(erfc(-30)).toBe(2);
    expect(Number.isNaN(erfc(NaN))).toBe(true);
  });
});

describe("roundProbability", () => {
  it("keeps two significant digits of the nearer of p and 1 - p, at least four decimals", () => {
    expect(roundProbability(0.945234567)).toBe(0.9452);
    expect(roundProbability(0.999998765)).toBe(0.9999988);
    expect(roundProbability(0.0000123456)).toBe(0.000012);
    expect(roundProbability(1 - 1e-12)).toBe(1);
    expect(roundProbability(3e-10)).toBe(0);
    expect(roundProbability(0.5)).toBe(0.5);
  });
});
