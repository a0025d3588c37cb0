// The analysis against captures from the physical comparator (host/src/sim/comparator-physics.ts):
// each timing effect alone, with RingInput.comparator telling the analysis what a tester knows,
// and the first-passage table against the brute-force reference of docs/hardware.md.

import { describe, expect, it } from "vitest";
import { ringOfQ } from "../physics/ring.ts";
import { physicalEdges, ringWaveform, type PhysicalComparator } from "../sim/comparator-physics.ts";
import { Random } from "../sim/random.ts";
import { fitRing } from "./analyze-ring.ts";
import { firstPassageShift, firstPassageSpreadRatio, type ComparatorTiming } from "./comparator-timing.ts";
import { analyzeRing, type RingAnalysis, type RingInput } from "./index.ts";

const TH: [number, number] = [0.035, -0.005];

interface Part { l_h: number; c_f: number; q: number; tick_hz: number; th?: [number, number] }

/** `stop_v`: the capture window ends four periods after the ring's envelope falls to this (default
 *  4 mV; the comparator's quiet detection then ends the capture). */
function capture(part: Part, comp: Partial<PhysicalComparator>, seed: number, comparator?: ComparatorTiming, stop_v = 0.004): RingInput {
  const th = part.th ?? TH;
  const { ring } = ringOfQ(part.l_h, part.c_f, part.q, 1);
  const c: PhysicalComparator = {
    rising_v: th[0], falling_v: th[1], delay_rise_s: 45e-9, delay_fall_s: 45e-9, jitter_s: 0.5 / part.tick_hz,
    noise_v: 0, noise_bw_hz: 2e6, ...comp,
  };
  const period = (2 * Math.PI) / ring.wd_rad_s;
  const window = (Math.log(1 / stop_v) / ring.alpha_per_s) + 4 * period;
  const e = physicalEdges(ringWaveform(ring), c, { tick_hz: part.tick_hz, ppm: 0, dead_time_s: 0 }, new Random(seed), { max_edges: 5000, window_s: window });
  return {
    tick_hz: part.tick_hz, ticks: e.ticks, levels: e.levels, tank_c_f: part.c_f, thresholds_v: th, tank_c_u_f: 0, timebase_u_rel: 0,
    ring_ended: e.ticks.length < 5000, ...(comparator ? { comparator } : {}),
  };
}

/** Over seeds 1..n: the mean relative errors, the mean relative U and how often U covered. */
function judge(part: Part, n: number, make: (seed: number) => RingInput) {
  const { q } = ringOfQ(part.l_h, part.c_f, part.q, 1);
  let lb = 0, lu = 0, qb = 0, qu = 0, lc = 0, qc = 0;
  const results: RingAnalysis[] = [];
  for (let s = 1; s <= n; s++) {
    const a = analyzeRing(make(s));
    results.push(a);
    lb += a.inductance_h / part.l_h - 1;
    lu += a.inductance_u_h / part.l_h;
    qb += a.q / q - 1;
    qu += a.q_u / q;
    if (Math.abs(a.inductance_h - part.l_h) <= a.inductance_u_h) lc++;
    if (Math.abs(a.q - q) <= a.q_u) qc++;
  }
  return { l_bias_over_u: lb / lu, q_bias_over_u: qb / qu, l_covered: lc / n, q_covered: qc / n, results };
}

describe("first-passage shift of ramp + first-order noise", () => {
  it("agrees with the brute-force reference's limits (docs/hardware.md)", () => {
    // Reference: test/reference/comparator-first-passage.test.ts, exact-OU steps on grids refined
    // 64x and Richardson-extrapolated in sqrt(h); values and standard errors from the table in
    // docs/hardware.md. Allowed: 3 combined standard errors (reference and table).
    for (const [x, ref, se] of [[0.1, -18.94, 0.11], [1, -0.722, 0.014], [10, -0.011, 0.002]]) {
      const tableSe = 0.01 * Math.abs(ref);
      expect(Math.abs(firstPassageShift(x) - ref)).toBeLessThan(3 * Math.hypot(se, tableSe));
    }
    // Spread of the decision time over sigma / S, the reference's h/64 column.
    expect(firstPassageSpreadRatio(0.1)).toBeCloseTo(5.987 / 10, 1);
    expect(firstPassageSpreadRatio(1)).toBeCloseTo(0.849, 1);
    expect(firstPassageSpreadRatio(10)).toBeCloseTo(1, 1);
  });

  it("falls monotonically towards zero for fast edges", () => {
    let last = -Infinity;
    for (let lx = Math.log(0.01); lx < Math.log(1000); lx += 0.1) {
      const m = firstPassageShift(Math.exp(lx));
      expect(m).toBeLessThan(0);
      expect(m).toBeGreaterThan(last);
      last = m;
    }
  });
});

describe("rise/fall delay skew", () => {
  // Offset thresholds: every cycle's high time measures the amplitude, so a constant skew reads
  // as a wrong amplitude law and so a wrong Q (issue: Q -7.8 % at 88 kHz for 33 ns).
  const part: Part = { l_h: 22e-6, c_f: 10e-9, q: 80, tick_hz: 64e6 };
  const skewed = { delay_rise_s: 45e-9 + 33e-9, noise_v: 0.3e-3 };

  it("is estimated from the capture when it is determined, and Q stays inside U", () => {
    const unknown: ComparatorTiming = { skew_s: 0, skew_u_s: Infinity, skew_source: "none" };
    const j = judge(part, 12, (s) => capture(part, skewed, s, unknown));
    expect(j.q_covered).toBeGreaterThanOrEqual(10 / 12);
    expect(Math.abs(j.q_bias_over_u)).toBeLessThan(0.3);
    const f = fitRing(capture(part, skewed, 1, unknown));
    expect(Math.abs(f.timing!.skew_s - 33e-9)).toBeLessThan(3 * f.timing!.skew_sd_s);
    expect(f.timing!.skew_sd_s).toBeLessThan(10e-9);
  });

  it("is named by COMPARATOR_SKEW when the caller says nothing about the comparator", () => {
    const flagged = (comp: Partial<PhysicalComparator>) =>
      judge(part, 8, (s) => capture(part, comp, s)).results.filter((a) => a.warnings.some((w) => w.code === "COMPARATOR_SKEW")).length;
    expect(flagged(skewed)).toBe(8);
    expect(flagged({ noise_v: 0.3e-3 })).toBe(0);
  });

  it("enters U through its prior where the capture cannot pin it down", () => {
    // A known skew (calibrated, u = 0) against a 20 ns prior: the prior's uncertainty widens U(Q).
    const known = judge(part, 4, (s) => capture(part, skewed, s, { skew_s: 33e-9, skew_u_s: 0 }));
    const prior = judge(part, 4, (s) => capture(part, skewed, s, { skew_s: 0, skew_u_s: 20e-9 }));
    const meanU = (j: ReturnType<typeof judge>) => j.results.reduce((s, a) => s + a.q_u, 0) / j.results.length;
    expect(meanU(prior)).toBeGreaterThan(1.2 * meanU(known));
  });
});

describe("rise/fall delay skew on a fast ring", () => {
  // 3.4 MHz, offset thresholds: 33 ns of skew is 0.7 rad of phase, and a fit started at the
  // prior's 0 ns lands in a false basin (Q several times too high) that steps in the skew cannot
  // leave; the analysis searches the prior's span first.
  const part: Part = { l_h: 4.7e-6, c_f: 470e-12, q: 300, tick_hz: 40e6 };
  it("is found across its prior's span, and Q stays inside U", () => {
    const prior: ComparatorTiming = { skew_s: 0, skew_u_s: 20e-9, skew_source: "board prior" };
    const j = judge(part, 8, (s) => capture(part, { delay_rise_s: 45e-9 + 33e-9, noise_v: 0.3e-3, jitter_s: 12.5e-9 }, s, prior));
    expect(j.q_covered).toBeGreaterThanOrEqual(6 / 8);
    expect(Math.abs(j.q_bias_over_u)).toBeLessThan(0.5);
  });
});

describe("first passage of continuous noise", () => {
  // A slow high-Q ring: its tail edges sit on slopes of a few sigma / tau, where the first
  // passage of ring + noise comes tens of ns early (issue: Q +0.4 to +0.8 % high, U covering
  // 0-68 %).
  const part: Part = { l_h: 1e-3, c_f: 10e-9, q: 500, tick_hz: 64e6 };
  const noisy = { noise_v: 0.6e-3, jitter_s: 2e-9 };

  it("is corrected from the slope, the noise and its bandwidth: Q inside U", () => {
    const timing: ComparatorTiming = { skew_s: 0, skew_u_s: 0, noise_bw_hz: 2e6, noise_v: 0.6e-3 };
    const j = judge(part, 12, (s) => capture(part, noisy, s, timing));
    expect(Math.abs(j.q_bias_over_u)).toBeLessThan(0.3);
    expect(j.q_covered).toBeGreaterThanOrEqual(10 / 12);
    expect(j.l_covered).toBeGreaterThanOrEqual(10 / 12);
  });
});

describe("first passage of noise three times the board's", () => {
  // The caller gives the board's 0.6 mV; the input carries 1.8 mV. The fit's own noise estimate
  // reads the first-passage scatter, which is narrower than sigma / slope on slow edges: taken
  // as it is, the shifts came out too small and L and Q read off (16 kHz, Q 250).
  const part: Part = { l_h: 100e-3, c_f: 1e-9, q: 250, tick_hz: 64e6 };
  it("is corrected with the noise the scatter implies: L and Q inside U", () => {
    const timing: ComparatorTiming = { skew_s: 0, skew_u_s: 0, noise_bw_hz: 2e6, noise_v: 0.6e-3 };
    // The window ends with the ring at the rising threshold (as the benchmark's: edges that noise
    // alone fires at the falling threshold after the ring has died are another matter).
    const j = judge(part, 12, (s) => capture(part, { noise_v: 1.8e-3, jitter_s: 7.8e-9 }, s, timing, 0.035));
    expect(j.l_covered).toBeGreaterThanOrEqual(10 / 12);
    expect(j.q_covered).toBeGreaterThanOrEqual(10 / 12);
  });
});

describe("overdrive delay", () => {
  // 16 kHz, noiseless input: sqrt(2 q / |slope|) grows along the decay and reads L high
  // (issue: +15 ppm at 16 kHz, outside the fit's share of U).
  const part: Part = { l_h: 1e-3, c_f: 100e-9, q: 40, tick_hz: 64e6 };
  const comp = { overdrive_v_s: 2e-12 };

  it("is corrected from the slope at each edge: L inside U", () => {
    const j = judge(part, 12, (s) => capture(part, comp, s, { skew_s: 0, skew_u_s: 0, overdrive_v_s: 2e-12, overdrive_u_v_s: 0.2e-12 }));
    expect(Math.abs(j.l_bias_over_u)).toBeLessThan(0.3);
    expect(j.l_covered).toBeGreaterThanOrEqual(10 / 12);
  });
});

describe("edges the noise fires after the ring has decayed into it", () => {
  // 16 kHz, Q 250, three times the board's noise, and a capture that runs on until the ring is
  // down to 4 mV: past the point where the envelope nears the 35 mV rising threshold, ring + noise
  // reaches it only where the noise is high, and those edges read the ring's end high (Q was
  // about 4 U high with no warning before they were left out).
  const part: Part = { l_h: 100e-3, c_f: 1e-9, q: 250, tick_hz: 64e6 };
  it("are left out: L and Q inside U", () => {
    const timing: ComparatorTiming = { skew_s: 0, skew_u_s: 0, noise_bw_hz: 2e6, noise_v: 0.6e-3 };
    const j = judge(part, 12, (s) => capture(part, { noise_v: 1.8e-3, jitter_s: 7.8e-9 }, s, timing));
    expect(j.q_covered).toBeGreaterThanOrEqual(10 / 12);
    expect(Math.abs(j.q_bias_over_u)).toBeLessThan(0.5);
    expect(j.l_covered).toBeGreaterThanOrEqual(10 / 12);
    // They are listed as rejected, with their reason.
    expect(j.results[0].rejected.some((r) => /noise/.test(r.reason))).toBe(true);
  });
});

describe("chatter once the hysteresis is narrow against the noise", () => {
  // 34 kHz, Q 1000, thresholds 3.5 / -0.5 mV (4 mV of hysteresis) and 1.8 mV of noise: once the
  // ring passes through the gap slowly against the noise, crossings chatter, and the 5000-edge
  // buffer fills with chatter long before the ring ends (Q read 1.6 U high on average, covered in
  // 35 % of the benchmark's seeds, before the chatter was cut off).
  const part: Part = { l_h: 2.2e-3, c_f: 10e-9, q: 1000, tick_hz: 64e6, th: [0.0035, -0.0005] };
  it("ends the ring's part of the capture, says so with THRESHOLD_IN_NOISE, and Q stays inside U", () => {
    const timing: ComparatorTiming = { skew_s: 0, skew_u_s: 0, noise_bw_hz: 2e6, noise_v: 0.6e-3 };
    const j = judge(part, 8, (s) => capture(part, { noise_v: 1.8e-3 }, s, timing));
    for (const a of j.results) expect(a.warnings.map((w) => w.code)).toContain("THRESHOLD_IN_NOISE");
    // With the first-passage shifts' Type B at 25 % although the noise had to be read from the
    // scatter (three times the caller's), L was covered in 6 of these 8 seeds.
    expect(j.q_covered).toBeGreaterThanOrEqual(7 / 8);
    expect(j.l_covered).toBeGreaterThanOrEqual(7 / 8);
    expect(Math.abs(j.q_bias_over_u)).toBeLessThan(0.5);
  });
});

describe("a skew the capture cannot pin down", () => {
  // 59 kHz, Q 25, offset thresholds 7 / -1 mV, a 5 V ring cut after 40 edges, 33 ns of skew against
  // the board's 0 +- 20 ns prior: the skew trades against the amplitude law the decay is read
  // from, and a fit held near the prior's 0 ns settled at a decay several sd too slow, which reads
  // L high through wd^2 + alpha^2 (L covered in 18 % of the benchmark's seeds).
  const { ring } = ringOfQ(330e-6, 22e-9, 25, 5);
  const th: [number, number] = [0.007, -0.001];
  const input = (seed: number): RingInput => {
    const c: PhysicalComparator = {
      rising_v: th[0], falling_v: th[1], delay_rise_s: 45e-9 + 33e-9, delay_fall_s: 45e-9, jitter_s: 0.5 / 64e6, noise_v: 0.6e-3, noise_bw_hz: 2e6,
    };
    const e = physicalEdges(ringWaveform(ring), c, { tick_hz: 64e6, ppm: 0, dead_time_s: 0 }, new Random(seed), { max_edges: 40, window_s: 1e-3 });
    return {
      tick_hz: 64e6, ticks: e.ticks, levels: e.levels, tank_c_f: 22e-9, thresholds_v: th, tank_c_u_f: 0, timebase_u_rel: 0, ring_ended: false,
      comparator: { skew_s: 0, skew_u_s: 20e-9, skew_source: "board prior", noise_bw_hz: 2e6, noise_v: 0.6e-3 },
    };
  };
  it("goes into U across its prior: L inside U", () => {
    const j = judge({ l_h: 330e-6, c_f: 22e-9, q: 25, tick_hz: 64e6 }, 16, input);
    // (Covered in 69 % of 100 seeds with this, 18 % without: docs/method.md §2a.)
    expect(j.l_covered).toBeGreaterThanOrEqual(8 / 16);
    expect(Math.abs(j.l_bias_over_u)).toBeLessThan(0.5);
  });
});

describe("a skew the capture pins down only loosely", () => {
  // 16 kHz, Q 500, offset thresholds, cut after 500 edges, 33 ns of skew against the board's
  // 0 +- 20 ns prior: the capture's skew sd is about 7 ns, and linearised about the prior-pulled
  // value U(Q) covered 77 % of the benchmark's seeds (99 % integrated over the prior).
  const { ring, q } = ringOfQ(1e-3, 10e-9, 500, 1);
  const input = (seed: number): RingInput => {
    const c: PhysicalComparator = {
      rising_v: TH[0], falling_v: TH[1], delay_rise_s: 45e-9 + 33e-9, delay_fall_s: 45e-9, jitter_s: 0.5 / 64e6, noise_v: 0.6e-3, noise_bw_hz: 2e6,
      overdrive_v_s: 2e-12,
    };
    const e = physicalEdges(ringWaveform(ring), c, { tick_hz: 64e6, ppm: 0, dead_time_s: 0 }, new Random(seed), { max_edges: 500, window_s: 0.1 });
    return {
      tick_hz: 64e6, ticks: e.ticks, levels: e.levels, tank_c_f: 10e-9, thresholds_v: TH, tank_c_u_f: 0, timebase_u_rel: 0, ring_ended: false,
      comparator: { skew_s: 0, skew_u_s: 20e-9, skew_source: "board prior", noise_bw_hz: 2e6, noise_v: 0.6e-3, overdrive_v_s: 2e-12, overdrive_u_v_s: 1e-12 },
    };
  };
  it("is integrated over its prior: Q inside U", () => {
    let covered = 0;
    for (let s = 1; s <= 16; s++) {
      const a = analyzeRing(input(s));
      if (Math.abs(a.q - q) <= a.q_u) covered++;
    }
    expect(covered).toBeGreaterThanOrEqual(15);
  });
});
