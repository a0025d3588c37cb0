import { describe, expect, it } from "vitest";
import { crossingTimes } from "../sim/comparator-edges.ts";
import { Random } from "../sim/random.ts";
import { fitLinePeriod, linePeriodVariance, reciprocalPeriod, reciprocalPeriodVariance } from "./baselines.ts";
import { analyzeRing } from "./analyze-ring.ts";

describe("least squares vs reciprocal counting (docs/method.md §4)", () => {
  it("has the variance ratio N(N+1)/(6(N-1))", () => {
    // docs/method.md §4 (computed) from Kay 1993 ch. 3-4 (value from memory): N = 10, 100, 1000 ->
    // 2.0370, 17.0034, 167.0003.
    const ratio = (n: number) => reciprocalPeriodVariance(1, n) / linePeriodVariance(1, n);
    expect(ratio(10)).toBeCloseTo(2.037, 4);
    expect(ratio(100)).toBeCloseTo(17.0034, 4);
    expect(ratio(1000)).toBeCloseTo(167.0003, 4);
  });

  it("gives the notes' period spreads for tick 62.5 ns, jitter 10 ns, T = 10 µs, N = 200", () => {
    // docs/method.md §4 (computed): sigma = 20.628 ns; LS 25.26 ps, reciprocal 146.6 ps.
    const sigma = Math.sqrt(62.5e-9 ** 2 / 12 + 10e-9 ** 2);
    expect(sigma).toBeCloseTo(20.628e-9, 12);
    expect(Math.sqrt(linePeriodVariance(sigma, 200))).toBeCloseTo(25.26e-12, 14);
    expect(Math.sqrt(reciprocalPeriodVariance(sigma, 200))).toBeCloseTo(146.6e-12, 13);
  });

  it("the two baselines show those variances on noisy equally spaced edges (seeded Monte Carlo)", () => {
    // Events of one level (rising edges of a ring too slow to decay), Gaussian timing noise.
    const period = 10e-6;
    const sigma = 20e-9;
    const n = 50;
    const tick_hz = 1e12;
    const rng = new Random(3);
    let sLine = 0, sRec = 0;
    const draws = 400;
    for (let d = 0; d < draws; d++) {
      const ticks: number[] = [];
      const levels: number[] = [];
      for (let k = 0; k < n; k++) {
        ticks.push(Math.floor((1e-6 + k * period + sigma * rng.normal()) * tick_hz));
        levels.push(1);
      }
      const input = { tick_hz, ticks, levels, tank_c_f: 1e-9, thresholds_v: [0.1, -0.1] as [number, number] };
      sLine += (fitLinePeriod(input).period_s - period) ** 2;
      sRec += (reciprocalPeriod(input).period_s - period) ** 2;
    }
    // Sample variances of 400 draws scatter by ~7 % (1 sd): allow 25 %.
    expect(sLine / draws / linePeriodVariance(sigma, n)).toBeGreaterThan(0.75);
    expect(sLine / draws / linePeriodVariance(sigma, n)).toBeLessThan(1.25);
    expect(sRec / draws / reciprocalPeriodVariance(sigma, n)).toBeGreaterThan(0.75);
    expect(sRec / draws / reciprocalPeriodVariance(sigma, n)).toBeLessThan(1.25);
  });
});

describe("threshold-crossing bias on the notes' reference ring (§2)", () => {
  // f0 = 100 kHz, Q = 50, A0 = 1 V, thresholds ±20 mV, noiseless, edges while A >= 2h.
  const w0 = 2 * Math.PI * 100e3;
  const alpha = w0 / 100;
  const wd = Math.sqrt(w0 * w0 - alpha * alpha);
  const cr = crossingTimes({ a0_v: 1, alpha_per_s: alpha, wd_rad_s: wd }, 0.02, -0.02, 10000, 1);
  const keep = cr.times.map((_, i) => i).filter((i) => Math.exp(-alpha * cr.times[i]) >= 0.04);
  const tick_hz = 1e17; // 10 as ticks: quantisation far below the effect
  const input = {
    tick_hz,
    ticks: keep.map((i) => Math.round(cr.times[i] * tick_hz)),
    levels: keep.map((i) => cr.levels[i]),
    tank_c_f: 1 / (w0 * w0 * 1e-3),
    thresholds_v: [0.02, -0.02] as [number, number],
  };
  const period = (2 * Math.PI) / wd;

  it("reads the period long with a straight line, and the edge model does not", () => {
    // docs/method.md §2 (computed): +1.325e-3 for a straight line; that is the line through the
    // 52 rising edges with A >= 2h (reproduced here), while the pooled line through all 103
    // edges (one offset per level, as fitLinePeriod does) reads +1.3183e-3.
    const rising = keep.filter((i) => cr.levels[i] === 1).map((i) => cr.times[i]);
    const n = rising.length;
    const mean = rising.reduce((a, b) => a + b, 0) / n;
    let sxy = 0, sxx = 0;
    rising.forEach((t, j) => {
      sxy += (j - (n - 1) / 2) * (t - mean);
      sxx += (j - (n - 1) / 2) ** 2;
    });
    expect(sxy / sxx / period - 1).toBeCloseTo(1.325e-3, 6);
    const line = fitLinePeriod(input).period_s / period - 1;
    expect(line).toBeCloseTo(1.3183e-3, 6);
    expect(reciprocalPeriod(input).period_s / period - 1).toBeGreaterThan(line);
    // docs/method.md §2: a model fit recovers T and alpha to < 1e-12 on these noiseless edges;
    // with 10 as ticks the check here is 1e-9.
    const a = analyzeRing(input);
    expect(Math.abs(a.fd_hz * period - 1)).toBeLessThan(1e-9);
    expect(Math.abs(a.alpha_per_s / alpha - 1)).toBeLessThan(1e-9);
    expect(a.edges_rejected).toBe(0);
  });
});
