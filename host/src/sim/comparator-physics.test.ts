// The physical comparator's deterministic parts (noise off) against exact crossings and the
// delay laws it states, and its noise behaviour where a real comparator's is known: hysteresis
// re-arm, chatter without hysteresis, grazing peaks at the ring's end. The first passage itself is
// validated against a brute-force reference in test/reference/comparator-first-passage.test.ts.

import { describe, expect, it } from "vitest";
import { ringOfQ } from "../physics/ring.ts";
import { sineWave, waveExtremum } from "../physics/ring-wave.ts";
import { captureEdges, crossingTimes, ringSlope, usesFirstPassage } from "./comparator-edges.ts";
import { firstPassageShift, physicalEdges, ringWaveform, type PhysicalComparator } from "./comparator-physics.ts";
import { Random } from "./random.ts";

const FINE = { tick_hz: 1e15, ppm: 0, dead_time_s: 0 };
const { ring } = ringOfQ(330e-6, 100e-9, 40, 1);
const quiet: PhysicalComparator = { rising_v: 0.035, falling_v: -0.005, offset_v: 0.4e-3, delay_rise_s: 0, delay_fall_s: 0, jitter_s: 0, noise_v: 0, noise_bw_hz: 2e6 };
const seconds = (e: { ticks: number[] }) => e.ticks.map((k) => k / FINE.tick_hz);

describe("physical comparator, noise off", () => {
  const exact = crossingTimes(ring, 0.0354, -0.0046, 100000, 1);

  it("decides at the exact threshold crossings with the hysteresis's levels", () => {
    const e = physicalEdges(ringWaveform(ring), quiet, FINE, new Random(1), { max_edges: 100000, window_s: 1 });
    expect(e.levels).toEqual(exact.levels);
    const worst = Math.max(...seconds(e).map((t, i) => Math.abs(t - exact.times[i])));
    expect(worst).toBeLessThan(1e-12);
  });

  it("adds the rising delay to rising edges and the falling delay to falling edges", () => {
    const e = physicalEdges(ringWaveform(ring), { ...quiet, delay_rise_s: 55e-9, delay_fall_s: 22e-9 }, FINE, new Random(1), { max_edges: 100000, window_s: 1 });
    seconds(e).forEach((t, i) => expect(t - exact.times[i]).toBeCloseTo(exact.levels[i] === 1 ? 55e-9 : 22e-9, 12));
    // The per-crossing model applies the same two delays.
    const pc = captureEdges(ring, { ...quiet, noise_model: "per-crossing", delay_rise_s: 55e-9, delay_fall_s: 22e-9 }, FINE, new Random(1), 100000, 1);
    seconds(pc).forEach((t, i) => expect(t - exact.times[i]).toBeCloseTo(exact.levels[i] === 1 ? 55e-9 : 22e-9, 12));
  });

  it("adds the overdrive delay sqrt(2 q / |slope|) of an integrator reaching q volt-seconds", () => {
    const q = 2e-12;
    const e = physicalEdges(ringWaveform(ring), { ...quiet, overdrive_v_s: q }, FINE, new Random(1), { max_edges: 100000, window_s: 1 });
    seconds(e).forEach((t, i) => expect(t - exact.times[i]).toBeCloseTo(Math.sqrt((2 * q) / Math.abs(ringSlope(ring, exact.times[i]))), 12));
  });

  it("applies the timer: crystal error, flooring to ticks, dead time, buffer size", () => {
    const timer = { tick_hz: 64e6, ppm: 50, dead_time_s: 0 };
    const e = physicalEdges(ringWaveform(ring), quiet, timer, new Random(1), { max_edges: 10, window_s: 1 });
    expect(e.ticks).toEqual(exact.times.slice(0, 10).map((t) => Math.floor(t * 64e6 * (1 + 50e-6))));
    // A dead time longer than the ring's half-period swallows every other edge.
    const period = (2 * Math.PI) / ring.wd_rad_s;
    const dead = physicalEdges(ringWaveform(ring), quiet, { ...timer, dead_time_s: 0.3 * period }, new Random(1), { max_edges: 1000, window_s: 1 });
    for (let k = 1; k < dead.ticks.length; k++) expect(dead.ticks[k] - dead.ticks[k - 1]).toBeGreaterThanOrEqual(0.3 * period * 64e6 - 1);
  });
});

describe("physical comparator, continuous noise", () => {
  const noisy: PhysicalComparator = { ...quiet, noise_v: 0.6e-3, jitter_s: 2e-9, delay_rise_s: 45e-9, delay_fall_s: 45e-9 };

  it("is seeded and deterministic", () => {
    const a = physicalEdges(ringWaveform(ring), noisy, FINE, new Random(9), { max_edges: 8192, window_s: 1 });
    const b = physicalEdges(ringWaveform(ring), noisy, FINE, new Random(9), { max_edges: 8192, window_s: 1 });
    expect(a).toEqual(b);
    const c = physicalEdges(ringWaveform(ring), noisy, FINE, new Random(10), { max_edges: 8192, window_s: 1 });
    expect(c.ticks).not.toEqual(a.ticks);
  });

  it("re-arms on the other threshold: with 40 mV of hysteresis the levels alternate, one edge per crossing", () => {
    for (let s = 0; s < 5; s++) {
      const e = physicalEdges(ringWaveform(ring), noisy, FINE, new Random(s), { max_edges: 8192, window_s: 1 });
      e.levels.forEach((l, i) => expect(l).toBe(i % 2 === 0 ? 1 : 0));
    }
  });

  it("chatters on noise without hysteresis, as a real comparator does", () => {
    const e = physicalEdges(ringWaveform(ring), { ...noisy, rising_v: 0.015, falling_v: 0.015 }, FINE, new Random(2), { max_edges: 100000, window_s: 1 });
    const clean = crossingTimes(ring, 0.0154, 0.0154, 100000, 1).times.length;
    expect(e.ticks.length).toBeGreaterThan(clean * 1.5);
  });

  it("fires on a grazing peak at the ring's end sometimes, not always and not never", () => {
    // The ring scaled so that its fourth maximum sits 2.5 sigma below the rising threshold. The
    // peak dwells there for many noise correlation times, so the noise's excursions fire it in
    // about 40 % of the rings (one noise value per crossing would fire 0.6 %).
    const t3 = waveExtremum(sineWave(1, ring.alpha_per_s, ring.wd_rad_s), 6);
    const peak3 = Math.exp(-ring.alpha_per_s * t3) * Math.sin(ring.wd_rad_s * t3);
    const grazing = { ...ring, a0_v: (0.0354 - 2.5 * 0.6e-3) / peak3 };
    let fired = 0;
    for (let s = 0; s < 60; s++) {
      const e = physicalEdges(ringWaveform(grazing), noisy, FINE, new Random(100 + s), { max_edges: 100000, window_s: 1 });
      // Three clean cycles (six edges) always; the grazing peak adds a rising and a falling edge.
      expect(e.ticks.length).toBeGreaterThanOrEqual(6);
      if (e.ticks.length >= 8) fired++;
    }
    expect(fired).toBeGreaterThan(6);
    expect(fired).toBeLessThan(54);
  });

  it("captureEdges takes the first-passage path for a band-limited noise and the per-crossing path otherwise", () => {
    expect(usesFirstPassage({ ...noisy })).toBe(true);
    expect(usesFirstPassage({ ...noisy, noise_model: "per-crossing" })).toBe(false);
    expect(usesFirstPassage({ ...noisy, noise_bw_hz: undefined })).toBe(false);
    expect(usesFirstPassage({ ...noisy, noise_v: 0, noise_bw_hz: undefined })).toBe(true);
    const viaCapture = captureEdges(ring, noisy, FINE, new Random(4), 8192, 1);
    const direct = physicalEdges(ringWaveform(ring), noisy, FINE, new Random(4), { max_edges: 8192, window_s: 1 });
    expect(viaCapture).toEqual(direct);
  });

  it("firstPassageShift: a slow ramp's decision is early, a fast ramp's nearly unbiased", () => {
    const tau = 1 / (2 * Math.PI * 2e6);
    const slow = firstPassageShift(0.1 * 0.6e-3 / tau, 0.6e-3, tau, { trials: 300, seed: 2 });
    const fast = firstPassageShift(30 * 0.6e-3 / tau, 0.6e-3, tau, { trials: 300, seed: 2 });
    expect(slow.mean_s).toBeLessThan(-10 * tau);
    expect(Math.abs(fast.mean_s)).toBeLessThan(0.02 * tau + 4 * fast.sem_s);
    // A fast ramp's spread is the frozen noise through the slope, sigma / S.
    expect(fast.sd_s / (tau / 30)).toBeGreaterThan(0.9);
    expect(fast.sd_s / (tau / 30)).toBeLessThan(1.1);
  });
});
