import { describe, expect, it } from "vitest";
import { ringConstants } from "../physics/ring.ts";
import { Random } from "../sim/random.ts";
import { inductanceFromFrequency, inductanceRelU, ringQuantities } from "./ring-quantities.ts";

describe("ring quantities (docs/method.md §1)", () => {
  it("reproduces the §1 check values from (wd, alpha)", () => {
    // docs/method.md §1 (computed), standard circuit theory (Terman 1943, value from memory):
    // L = 10 µH, C = 10 nF, Rs = 0.5 Ω -> f0 = 503 292.12 Hz, alpha = 25 000 /s, Q = 63.2456,
    // fd = 503 276.39 Hz, ESR = 0.5000 Ω.
    const k = ringConstants({ l_h: 10e-6, rs_ohm: 0.5 }, 10e-9);
    const rq = ringQuantities(k.wd_rad_s, k.alpha_per_s, [0, 0, 0], 10e-9, 0, 0);
    expect(rq.f0_hz).toBeCloseTo(503292.12, 1);
    expect(rq.fd_hz).toBeCloseTo(503276.39, 1);
    expect(rq.alpha_per_s).toBeCloseTo(25000, 6);
    expect(rq.q).toBeCloseTo(63.2456, 4);
    expect(rq.esr_ohm).toBeCloseTo(0.5, 10);
    expect(rq.inductance_h / 10e-6 - 1).toBeLessThan(1e-12);
  });

  it("with a parallel loss reports the total tank loss", () => {
    // docs/method.md §1 (computed): adding Rp = 100 kΩ gives alpha = 25 500 /s and Q = 62.006.
    const k = ringConstants({ l_h: 10e-6, rs_ohm: 0.5, rp_ohm: 100e3 }, 10e-9);
    const rq = ringQuantities(k.wd_rad_s, k.alpha_per_s, [0, 0, 0], 10e-9, 0, 0);
    expect(rq.alpha_per_s).toBeCloseTo(25500, 6);
    expect(rq.q).toBeCloseTo(62.006, 3);
  });

  it("uses w0, not wd: L from wd alone would read high by 1/(1 - 1/(4Q^2))", () => {
    // docs/method.md §1: +0.25 % at Q = 10, about +3 % at Q = 3 (standard circuit theory).
    for (const [q, high] of [[10, 0.0025], [3, 0.029]]) {
      const w0 = 1e6;
      const alpha = w0 / (2 * q);
      const wd = Math.sqrt(w0 * w0 - alpha * alpha);
      const c = 1e-9;
      const rq = ringQuantities(wd, alpha, [0, 0, 0], c, 0, 0);
      expect(rq.inductance_h * w0 * w0 * c).toBeCloseTo(1, 12);
      const fromWd = 1 / (wd * wd * c);
      expect(fromWd / rq.inductance_h - 1).toBeCloseTo(high, 3);
    }
  });

  it("matches bench readings of tank frequency and capacitance", () => {
    // Common bench practice, no source (issue 3 check values):
    expect(inductanceFromFrequency(82.2e3, 47e-9)).toBeCloseTo(80e-6, 6); // about 80 µH
    expect(inductanceFromFrequency(22.8e3, 47e-9) / 1.04e-3).toBeCloseTo(1, 1); // about 1.04 mH
    expect(inductanceFromFrequency(57.5e3, 1e-9) / 7.7e-3).toBeCloseTo(1, 1); // about 7.7 mH
    expect(inductanceFromFrequency(77.4e3, 1e-9) / 4.2e-3).toBeCloseTo(1, 1); // about 4.2 mH
    expect(inductanceFromFrequency(1.94e6, 1e-9) / 6.7e-6).toBeCloseTo(1, 1); // about 6.7 µH
    // Moving one part from 48 nF to 1 nF raises its frequency about 6.9 times: f ∝ 1/sqrt(C).
    const l = 100e-6;
    const f = (c: number) => 1 / (2 * Math.PI * Math.sqrt(l * c));
    expect(f(1e-9) / f(48e-9)).toBeCloseTo(6.9, 1);
  });
});

describe("uncertainty of L (JCGM 100:2008)", () => {
  // docs/method.md §5 (computed): C = 1.000 nF ±1 % rectangular, f = 159 154.94 Hz with a ±100 ppm
  // rectangular timebase -> L = 1.0000 mH, u_rel = 0.57747 %, U(k = 2) = 11.55 µH.
  const c = 1e-9;
  const f = 159154.94;
  const uC = 0.01 / Math.sqrt(3); // JCGM 100:2008 §4.3.7, rectangular half-width a: u = a/sqrt(3)
  const uT = 100e-6 / Math.sqrt(3);

  it("reproduces the §5 example by the law of propagation", () => {
    expect(inductanceFromFrequency(f, c)).toBeCloseTo(1e-3, 8);
    expect(inductanceRelU(uT, uC)).toBeCloseTo(0.0057747, 6);
    const w = 2 * Math.PI * f;
    const rq = ringQuantities(w, 1e-9 * w, [0, 0, 0], c, uC * c, uT);
    expect(2 * rq.u.inductance_h).toBeCloseTo(11.55e-6, 8);
    expect(rq.budget.map((b) => b.name)).toEqual(["fit", "capacitance", "timebase"]);
  });

  it("agrees with a JCGM 101:2008 Monte Carlo propagation", () => {
    // JCGM 101:2008 §7: propagate the input distributions by drawing; the notes quote 0.5778 %
    // and a 95 % interval [-0.941 %, +0.959 %] from 2e6 draws; 2e5 seeded draws here.
    const rng = new Random(20081);
    const n = 200_000;
    const rel = new Float64Array(n);
    let s = 0, s2 = 0;
    for (let i = 0; i < n; i++) {
      const ci = c * (1 + 0.01 * (2 * rng.uniform() - 1));
      const fi = f * (1 + 100e-6 * (2 * rng.uniform() - 1));
      rel[i] = inductanceFromFrequency(fi, ci) / 1e-3 - 1;
      s += rel[i];
      s2 += rel[i] * rel[i];
    }
    const sd = Math.sqrt(s2 / n - (s / n) ** 2);
    expect(sd).toBeCloseTo(0.005778, 4);
    rel.sort();
    expect(rel[Math.floor(0.025 * n)]).toBeCloseTo(-0.00941, 3);
    expect(rel[Math.floor(0.975 * n)]).toBeCloseTo(0.00959, 3);
    // The GUM value (0.57747 %) the analysis reports agrees with the Monte Carlo to 0.1 %.
    expect(Math.abs(sd / inductanceRelU(uT, uC) - 1)).toBeLessThan(0.003);
  });
});
