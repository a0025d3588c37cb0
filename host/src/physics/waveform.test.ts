// Waveforms for the physical comparator: values, the bounds it relies on to skip ahead (they must
// hold everywhere after t, or an edge could be skipped), and nextReach against exact crossings.

import { describe, expect, it } from "vitest";
import { crossingTimes } from "../sim/comparator-edges.ts";
import { solveRing, stateAtOpening } from "./front-end-circuit.ts";
import { ringOfQ } from "./ring.ts";
import { waveSlope, waveValue } from "./ring-wave.ts";
import { splineWaveform, waveformOfRing, type Waveform } from "./waveform.ts";

const { ring } = ringOfQ(330e-6, 100e-9, 30, 1);
const period = (2 * Math.PI) / ring.wd_rad_s;
const choke = { l_h: 330e-6, rs_ohm: 0.42, rp_ohm: Infinity, c_f: 100.45e-9, csw_f: 18e-12, r_ohm: 100.4, supply_v: 5, sense_ohm: 400e3 };
const frontEnd = solveRing(choke, stateAtOpening(choke, 0.05, 0.35, 40e-6));

/** Every bound checked on a dense grid: |v| <= amplitudeAfter, |v''| <= curvatureAfter. */
function checkBounds(w: Waveform, t_end: number, samples: number) {
  const ts = Array.from({ length: samples }, (_, i) => (i / samples) * t_end);
  const v = ts.map((t) => w.value(t));
  const h = t_end / samples;
  let maxAfter = 0;
  let maxCurv = 0;
  for (let i = samples - 2; i >= 1; i--) {
    maxAfter = Math.max(maxAfter, Math.abs(v[i]));
    maxCurv = Math.max(maxCurv, Math.abs(v[i + 1] - 2 * v[i] + v[i - 1]) / (h * h));
    expect(w.amplitudeAfter(ts[i])).toBeGreaterThanOrEqual(maxAfter * (1 - 1e-12));
    // The second difference at i spans [t(i-1), t(i+1)]: the bound from t(i-1) covers it.
    if (w.curvatureAfter) expect(w.curvatureAfter(ts[i - 1])).toBeGreaterThanOrEqual(maxCurv * (1 - 1e-3));
  }
}

/** Successive threshold crossings found with nextReach, comparator starting low. */
function reachTimes(w: Waveform, vh: number, vl: number, n: number): number[] {
  const out: number[] = [];
  let t = 0;
  let high = false;
  while (out.length < n) {
    const r = high ? w.nextReach!(t, vl, -1) : w.nextReach!(t, vh, 1);
    if (!(r < Infinity)) break;
    out.push(r);
    high = !high;
    t = r + 1e-12;
  }
  return out;
}

describe("waveforms for the physical comparator", () => {
  it("the closed-form ring: nextReach finds the exact crossings; the envelope and curvature bounds hold", () => {
    const w = waveformOfRing(frontEnd);
    const exact = crossingTimes(frontEnd, 0.0354, -0.0046, 100000, 1).times;
    const mine = reachTimes(w, 0.0354, -0.0046, 100000);
    expect(mine.length).toBe(exact.length);
    mine.forEach((t, i) => expect(Math.abs(t - exact[i])).toBeLessThan(1e-12));
    checkBounds(w, 40 * period, 20000);
    expect(w.nextReach!(mine[mine.length - 1] + 1e-9, 0.0354, 1)).toBe(Infinity);
  });

  it("a sampled ring through the spline: values within 2e-7 of the amplitude at 100 samples per period, crossings within 1e-6 of a period", () => {
    const n = 100 * 40;
    const ts = Array.from({ length: n + 1 }, (_, i) => (i / 100) * period);
    const w = splineWaveform(ts, ts.map((t) => waveValue(frontEnd, t)));
    // From the second period on: the first samples cannot follow the fast pole's nanoseconds.
    for (let k = 1; k < 2000; k++) {
      const t = (1 + ((k + 0.37) / 2000) * 37) * period;
      expect(Math.abs(w.value(t) - waveValue(frontEnd, t))).toBeLessThan(2e-7 * Math.hypot(frontEnd.p_v, frontEnd.q_v));
      expect(Math.abs(w.slope(t) - waveSlope(frontEnd, t))).toBeLessThan(2e-5 * Math.hypot(frontEnd.p_v, frontEnd.q_v) * frontEnd.wd_rad_s);
    }
    const exact = crossingTimes(frontEnd, 0.0354, -0.0046, 100000, 1).times.filter((t) => t < 39 * period);
    const mine = reachTimes(w, 0.0354, -0.0046, exact.length);
    expect(mine.length).toBe(exact.length);
    mine.forEach((t, i) => exact[i] > period && expect(Math.abs(t - exact[i]) / period).toBeLessThan(1e-6));
    checkBounds(w, 39.9 * period, 20000);
    expect(w.end_s).toBe(ts[n]);
  });

  it("drops repeated and backward time points of a sampled record", () => {
    const w = splineWaveform([0, 1, 1, 2, 1.5, 3], [0, 1, 5, 2, 9, 3]);
    expect(w.value(1)).toBeCloseTo(1, 12);
    expect(w.value(3)).toBeCloseTo(3, 12);
    expect(() => splineWaveform([1, 1], [0, 0])).toThrow(RangeError);
  });
});
