// The simulator's first-passage comparator (host/src/sim/first-passage.ts: exact OU jumps, the
// Brownian-bridge crossing probability between points, bisection) against the plainest
// simulation of the same process (first-passage-reference.ts: exact OU steps on a fixed grid,
// checked only at the grid points, no bridge correction; own random numbers). The reference's
// first passage comes late by an error that shrinks like sqrt(h) (M. Broadie, P. Glasserman and
// S. Kou, Mathematical Finance 7(4), 1997, value from memory); it must converge on the
// simulator's value. Noise of the reference board: 0.6 mV rms in 2 MHz (tau = 79.6 ns).

import { describe, expect, it } from "vitest";
import { captureEdges, crossingTimes } from "../../host/src/sim/comparator-edges.ts";
import { physicalEdges, rampWaveform } from "../../host/src/sim/comparator-physics.ts";
import { Random } from "../../host/src/sim/random.ts";
import { bruteForceFirstPassage, bruteForceRamp, meanOf, type BruteForceResult } from "./first-passage-reference.ts";

const SIGMA = 0.6e-3;
const BW = 2e6;
const TAU = 1 / (2 * Math.PI * BW);
const FAST_TIMER = { tick_hz: 1e15, ppm: 0, dead_time_s: 0 };

/** Richardson's extrapolation in sqrt(h) from the two finest grids, per trial (their noise is shared). */
function extrapolated(bf: BruteForceResult) {
  const [, , h16, h64] = bf.times_s;
  return meanOf(h64.map((v, i) => 2 * v - h16[i]));
}

/** Mean differences between successive grids (coarse minus fine): about halving for sqrt(h). */
function steps(bf: BruteForceResult): number[] {
  return [0, 1, 2].map((g) => meanOf(bf.times_s[g].map((v, i) => v - bf.times_s[g + 1][i])).mean);
}

function simulatedRamp(slope: number, lead_s: number, trials: number) {
  const rng = new Random(11);
  const comp = { rising_v: 0, falling_v: -1, delay_rise_s: 0, delay_fall_s: 0, jitter_s: 0, noise_v: SIGMA, noise_bw_hz: BW };
  const x = new Float64Array(trials);
  for (let k = 0; k < trials; k++) {
    const e = physicalEdges(rampWaveform(slope, lead_s, Infinity), comp, FAST_TIMER, rng, { max_edges: 1, window_s: 1 });
    x[k] = e.ticks[0] / FAST_TIMER.tick_hz - lead_s;
  }
  return meanOf(x);
}

const ramps = [
  { name: "slow ramp, S tau / sigma = 0.1", ratio: 0.1, h_s: TAU / 2, trials: 2000 },
  { name: "ramp with S tau / sigma = 1", ratio: 1, h_s: TAU / 4, trials: 3000 },
  { name: "fast ramp, S tau / sigma = 10", ratio: 10, h_s: TAU / 8, trials: 4000 },
];

describe("first passage of ramp + band-limited noise: simulator against a brute-force fine-step reference", () => {
  it.each(ramps)("$name: the reference converges like sqrt(h) on the simulator's mean shift and spread", ({ ratio, h_s, trials }) => {
    const slope = (ratio * SIGMA) / TAU;
    const lead = (9 * SIGMA) / slope + 3 * TAU;
    const bf = bruteForceRamp({ slope_v_s: slope, sigma_v: SIGMA, tau_s: TAU, h_s, lead_s: lead, trials, seed: 5 });
    const sim = simulatedRamp(slope, lead, trials);
    // Convergence like sqrt(h): each 4x finer grid removes about half the remaining error.
    const d = steps(bf);
    expect(d[0]).toBeGreaterThan(0);
    expect(d[0] / d[1]).toBeGreaterThan(1.5);
    expect(d[0] / d[1]).toBeLessThan(3.6);
    expect(d[1] / d[2]).toBeGreaterThan(1.5);
    expect(d[1] / d[2]).toBeLessThan(3.6);
    // The grids approach the simulator from above (discrete checking misses crossings)...
    for (const g of bf.grids) expect(g.mean_s).toBeGreaterThan(sim.mean - 3 * sim.sem);
    // ...and their limit is the simulator's value, within 4 standard errors.
    const lim = extrapolated(bf);
    expect(Math.abs(lim.mean - sim.mean)).toBeLessThan(4 * Math.hypot(lim.sem, sim.sem));
    // The spread converges too (faster than the mean): within 5 % on the finest grid.
    expect(Math.abs(sim.sd / bf.grids[3].sd_s - 1)).toBeLessThan(0.05);
  });

  it("a slow ramp's edge comes early by many tau: first passage, not the crossing of the mean", () => {
    const slope = (0.1 * SIGMA) / TAU;
    const sim = simulatedRamp(slope, (9 * SIGMA) / slope + 3 * TAU, 400);
    // The noise's peaks reach the threshold while the ramp is still about 2 sigma below it.
    expect(sim.mean).toBeLessThan((-1.5 * SIGMA) / slope);
  });
});

describe("captureEdges on a ring's slow tail: the simulated tester's comparator decides by first passage", () => {
  it("the first edge of a ring peaking just above the threshold comes early as the reference says", () => {
    // A 16 kHz ring peaking at 43.6 mV against the 35.4 mV rising threshold: slope at the
    // crossing about 2.5 kV/s, S tau / sigma = 0.34.
    const a0 = 0.045, alpha = 2000, wd = 2 * Math.PI * 16e3;
    const ring = { a0_v: a0, alpha_per_s: alpha, wd_rad_s: wd };
    const th = 0.0354;
    const exact = crossingTimes(ring, th, -0.0046, 1, 1).times[0];
    const comp = { rising_v: 0.035, falling_v: -0.005, offset_v: 0.4e-3, jitter_s: 0, noise_v: SIGMA, noise_bw_hz: BW, delay_rise_s: 0, delay_fall_s: 0 };
    const trials = 1500;
    const x = new Float64Array(trials);
    const rng = new Random(3);
    for (let k = 0; k < trials; k++) x[k] = captureEdges(ring, comp, FAST_TIMER, rng, 1, 1).ticks[0] / FAST_TIMER.tick_hz - exact;
    const sim = meanOf(x);
    const peak_s = Math.atan2(wd, alpha) / wd;
    const bf = bruteForceFirstPassage({
      v: (t) => a0 * Math.exp(-alpha * t) * Math.sin(wd * t), threshold_v: th, start_s: 0, origin_s: exact, end_s: peak_s + 20e-6,
      sigma_v: SIGMA, tau_s: TAU, h_s: TAU / 2, trials, seed: 8,
    });
    const lim = extrapolated(bf);
    expect(sim.mean).toBeLessThan(-2 * TAU); // 0.27 µs early; one noise value per crossing gives about 0
    console.log(`ring tail: simulator ${(sim.mean * 1e9).toFixed(1)} ± ${(sim.sem * 1e9).toFixed(1)} ns, reference limit ${(lim.mean * 1e9).toFixed(1)} ± ${(lim.sem * 1e9).toFixed(1)} ns`);
    expect(Math.abs(lim.mean - sim.mean)).toBeLessThan(4 * Math.hypot(lim.sem, sim.sem));
  });
});
