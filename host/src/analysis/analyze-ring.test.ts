import { describe, expect, it } from "vitest";
import { ringOfQ, ringWaveform } from "../physics/ring.ts";
import { captureEdges, crossingTimes } from "../sim/comparator-edges.ts";
import { Random } from "../sim/random.ts";
import { analyzeRing, ringCramerRao, type RingInput } from "./index.ts";

interface Case {
  l_h: number;
  c_f: number;
  q: number;
  a0_v: number;
  thresholds_v: [number, number];
  tick_hz: number;
}

/** A part of inductance L and quality Q on tank C, rung to about a0_v, through the simulator. */
function capture(k: Case, seed: number, noise = { jitter_s: 2e-9, noise_v: 0.3e-3 }, maxEdges = 3000) {
  const { ring, q } = ringOfQ(k.l_h, k.c_f, k.q, k.a0_v);
  const comp = { rising_v: k.thresholds_v[0], falling_v: k.thresholds_v[1], ...noise, delay_rise_s: 40e-9, delay_fall_s: 40e-9 };
  const edges = captureEdges(ring, comp, { tick_hz: k.tick_hz, ppm: 0, dead_time_s: 0 }, new Random(seed), maxEdges, 10);
  const input: RingInput = { tick_hz: k.tick_hz, ticks: edges.ticks, levels: edges.levels, tank_c_f: k.c_f, thresholds_v: k.thresholds_v, tank_c_u_f: 0, timebase_u_rel: 0 };
  return { input, ring, q, comp };
}

const OFFSET: [number, number] = [0.035, -0.005]; // VH = +1.75h, VL = -0.25h with h = 20 mV

// Demo parts invented for the project (coils, chokes, transformer windings), 1 µH - 100 mH, Q 2-500.
const GRID: Case[] = [
  { l_h: 1e-6, c_f: 4.7e-9, q: 40, a0_v: 1, thresholds_v: OFFSET, tick_hz: 200e6 },
  { l_h: 1e-6, c_f: 100e-9, q: 2, a0_v: 10, thresholds_v: [0.007, -0.001], tick_hz: 200e6 },
  { l_h: 22e-6, c_f: 10e-9, q: 80, a0_v: 1, thresholds_v: [0.02, -0.02], tick_hz: 64e6 },
  { l_h: 150e-6, c_f: 47e-9, q: 8, a0_v: 2, thresholds_v: OFFSET, tick_hz: 64e6 },
  { l_h: 1e-3, c_f: 10e-9, q: 500, a0_v: 1, thresholds_v: OFFSET, tick_hz: 64e6 },
  { l_h: 4.7e-3, c_f: 1e-9, q: 120, a0_v: 1, thresholds_v: OFFSET, tick_hz: 64e6 },
  { l_h: 33e-3, c_f: 100e-9, q: 3, a0_v: 10, thresholds_v: [0.007, -0.001], tick_hz: 16e6 },
  { l_h: 100e-3, c_f: 1e-9, q: 250, a0_v: 1, thresholds_v: OFFSET, tick_hz: 64e6 },
];

describe("analyzeRing on noiseless edges", () => {
  it("recovers the ring to 1e-9 with offset thresholds (docs/method.md §2)", () => {
    // The notes: a model fit recovers T and alpha to < 1e-12 on noiseless edges. Ticks of 10 as
    // (rounding 5e-18 s on times up to 1e-4 s) bound this check at 1e-9.
    const w0 = 2 * Math.PI * 100e3;
    const alpha = w0 / 100;
    const wd = Math.sqrt(w0 * w0 - alpha * alpha);
    const cr = crossingTimes({ a0_v: 1, alpha_per_s: alpha, wd_rad_s: wd }, 0.035, -0.005, 10000, 1);
    const tick_hz = 1e17;
    const a = analyzeRing({
      tick_hz, ticks: cr.times.map((t) => Math.round(t * tick_hz)), levels: cr.levels,
      tank_c_f: 1e-9, thresholds_v: [0.035, -0.005],
    });
    expect(Math.abs(a.fd_hz / (wd / (2 * Math.PI)) - 1)).toBeLessThan(1e-9);
    expect(Math.abs(a.alpha_per_s / alpha - 1)).toBeLessThan(1e-9);
    expect(Math.abs(a.amplitude_v - 1)).toBeLessThan(1e-9);
    expect(a.q).toBeCloseTo(50, 6);
    expect(a.edges_used).toBe(cr.times.length);
  });

  it("reads the notes' §1 part from its noiseless edges", () => {
    // docs/method.md §1 (computed), standard circuit theory (Terman 1943, value from memory):
    // L = 10 µH, C = 10 nF, Rs = 0.5 Ω -> f0 = 503 292.12 Hz, Q = 63.2456, ESR = 0.5000 Ω;
    // with I0 = 10 mA the ring amplitude is 0.31624 V.
    const part = { l_h: 10e-6, rs_ohm: 0.5 };
    const ring = ringWaveform(part, 10e-9, 10e-3);
    const cr = crossingTimes(ring, 0.035 * 0.31624, -0.005 * 0.31624, 10000, 1);
    const tick_hz = 1e17;
    const a = analyzeRing({
      tick_hz, ticks: cr.times.map((t) => Math.round(t * tick_hz)), levels: cr.levels,
      tank_c_f: 10e-9, thresholds_v: [0.035 * 0.31624, -0.005 * 0.31624],
    });
    expect(a.f0_hz).toBeCloseTo(503292.12, 1);
    expect(a.q).toBeCloseTo(63.2456, 4);
    expect(a.esr_ohm).toBeCloseTo(0.5, 6);
    expect(a.inductance_h).toBeCloseTo(10e-6, 12);
    expect(a.amplitude_v).toBeCloseTo(0.31624, 5);
  });

  it("reports the GUM budget of the notes' §5 example when the fit is exact", () => {
    // docs/method.md §5 (computed) (JCGM 100:2008): 1 nF ±1 % rect., 159 154.94 Hz with ±100 ppm
    // rect. timebase -> L = 1.0000 mH, U(k = 2) = 11.55 µH; the capacitance dominates.
    const c = 1e-9;
    const w0 = 2 * Math.PI * 159154.94;
    const alpha = w0 / 400;
    const wd = Math.sqrt(w0 * w0 - alpha * alpha);
    const cr = crossingTimes({ a0_v: 1, alpha_per_s: alpha, wd_rad_s: wd }, 0.035, -0.005, 4000, 1);
    const tick_hz = 1e16;
    const a = analyzeRing({
      tick_hz, ticks: cr.times.map((t) => Math.round(t * tick_hz)), levels: cr.levels, tank_c_f: c,
      tank_c_u_f: (0.01 * c) / Math.sqrt(3), timebase_u_rel: 100e-6 / Math.sqrt(3), thresholds_v: [0.035, -0.005],
    });
    expect(a.inductance_h).toBeCloseTo(1e-3, 9);
    expect(a.inductance_u_h).toBeCloseTo(11.55e-6, 8);
    const budget = Object.fromEntries(a.budget.map((b) => [b.name, b.rel_u]));
    expect(budget.capacitance).toBeCloseTo(0.01 / Math.sqrt(3), 12);
    expect(budget.timebase).toBeCloseTo(200e-6 / Math.sqrt(3), 12);
    expect(budget.fit).toBeLessThan(1e-8);
  });
});

describe("analyzeRing on noisy simulated captures", () => {
  it.each(GRID.map((k, i) => [i, k] as const))("part %i: L and Q recovered to the bound, honest uncertainty", (_i, k) => {
    const noise = { jitter_s: 2e-9, noise_v: 0.3e-3 };
    const { ring, comp } = capture(k, 1, noise);
    const cr = crossingTimes(ring, comp.rising_v, comp.falling_v, 3000, 10);
    const bound = ringCramerRao(
      { wd_rad_s: ring.wd_rad_s, alpha_per_s: ring.alpha_per_s, a0_v: ring.a0_v, tank_c_f: k.c_f },
      { times_s: cr.times, levels: cr.levels },
      { tick_hz: k.tick_hz, sigma_t_s: noise.jitter_s, sigma_v_v: noise.noise_v }, k.thresholds_v,
    );
    const lSd = bound.l_sd_h / k.l_h;
    for (const seed of [11, 12, 13]) {
      const { input, q } = capture(k, seed, noise);
      const a = analyzeRing(input);
      const lErr = a.inductance_h / k.l_h - 1;
      const qErr = a.q / q - 1;
      // Issue 3 goals (common bench practice, no source): L within 0.05 % and Q within a few %,
      // where the capture allows it; the Cramér-Rao bound (Kay 1993 §3.9) says where it does not
      // (Q 2-3 rings give ~10 edges: there the bound on L is 0.1-0.8 % at this noise).
      expect(Math.abs(lErr)).toBeLessThan(Math.max(5e-4, 4 * lSd));
      expect(Math.abs(qErr)).toBeLessThan(Math.max(0.04, (4 * bound.q_sd) / q));
      // The reported expanded uncertainties (k = 2) cover the error at 4 standard deviations.
      expect(Math.abs(lErr * k.l_h)).toBeLessThan(2 * a.inductance_u_h);
      expect(Math.abs(qErr * q)).toBeLessThan(2 * a.q_u);
      // ... and are close to the bound itself: the fit neither hides nor wastes information.
      if (bound.edges >= 40) {
        expect(a.inductance_u_h / 2 / bound.l_sd_h).toBeGreaterThan(0.7);
        expect(a.inductance_u_h / 2 / bound.l_sd_h).toBeLessThan(1.5);
      }
      expect(a.edges_rejected).toBeLessThanOrEqual(2);
    }
    if (bound.edges >= 40 && k.thresholds_v[0] + k.thresholds_v[1] !== 0) expect(lSd).toBeLessThan(1.25e-4);
  });
});

describe("a ring known to have died out (ring_ended)", () => {
  it("keeps Q of a low-Q part with few edges sane", () => {
    // 1 µH, Q 3, rung to 3 V on 4.7 nF with offset thresholds: 8 edges. The edges alone bound Q
    // only to about ±90 % (Cramér-Rao, Kay 1993 §3.9) and let the fit run to the no-decay limit;
    // that the ring did not reach the next threshold keeps it within a factor of three.
    const k: Case = { l_h: 1e-6, c_f: 4.7e-9, q: 3, a0_v: 3, thresholds_v: OFFSET, tick_hz: 92e6 };
    let runaways = 0;
    for (let seed = 1; seed <= 20; seed++) {
      const { input, q } = capture(k, 1000 + seed, { jitter_s: 6.5e-9, noise_v: 0.5e-3 });
      const ended = analyzeRing({ ...input, ring_ended: true });
      expect(ended.q).toBeGreaterThan(q / 3);
      expect(ended.q).toBeLessThan(3 * q);
      if (analyzeRing(input).q > 10 * q) runaways++;
    }
    expect(runaways).toBeGreaterThan(0); // without the knowledge some fits do run away
  });
});

