import { describe, expect, it } from "vitest";
import { ringOfQ } from "../physics/ring.ts";
import { captureEdges } from "../sim/comparator-edges.ts";
import { Random } from "../sim/random.ts";
import { analyzeRing, type RingInput } from "./index.ts";

const TH: [number, number] = [0.035, -0.005];

function ring(q: number, a0_v: number, maxEdges: number, seed: number, tick_hz = 64e6) {
  const l_h = 68e-6, c_f = 33e-9; // demo coil, about 106 kHz
  const wave = ringOfQ(l_h, c_f, q, a0_v).ring;
  const comp = { rising_v: TH[0], falling_v: TH[1], jitter_s: 3e-9, noise_v: 0.2e-3, delay_rise_s: 40e-9, delay_fall_s: 40e-9 };
  const e = captureEdges(wave, comp, { tick_hz, ppm: 0, dead_time_s: 0 }, new Random(seed), maxEdges, 10);
  return { tick_hz, ticks: e.ticks, levels: e.levels, tank_c_f: c_f, thresholds_v: TH } as RingInput;
}

/**
 * Edges of a ring whose frequency rises with amplitude, w(t) = wd (1 + kappa A(t)/A0), as with a
 * class II tank capacitor; crossings found by bisection on the phase.
 */
function driftingRing(kappa: number, seed: number): RingInput {
  const wd = 2 * Math.PI * 100e3;
  const alpha = wd / 160; // Q about 80
  const tick_hz = 64e6;
  const rng = new Random(seed);
  // Phase theta(t) = wd t + wd kappa (1 - e^(-alpha t)) / alpha; v = e^(-alpha t) sin(theta).
  const theta = (t: number) => wd * t + (wd * kappa * (1 - Math.exp(-alpha * t))) / alpha;
  const ticks: number[] = [];
  const levels: number[] = [];
  for (let m = 0; ; m++) {
    const rise = m % 2 === 0;
    const v = rise ? TH[0] : TH[1];
    const f = (t: number) => Math.exp(-alpha * t) * Math.sin(theta(t)) - v;
    // Bracket: from the zero crossing of this half-cycle to the next extreme.
    let lo = 0, hi = 0;
    const target = m * Math.PI;
    lo = bisect((t) => theta(t) - target, 0, 1);
    hi = bisect((t) => theta(t) - target - Math.PI / 2, 0, 1);
    if ((rise && f(hi) < 0) || (!rise && f(hi) > 0)) break;
    const t = bisect(f, lo, hi, !rise);
    ticks.push(Math.floor((t + 3e-9 * rng.normal()) * tick_hz));
    levels.push(rise ? 1 : 0);
  }
  return { tick_hz, ticks, levels, tank_c_f: 10e-9, thresholds_v: TH };
}

function bisect(f: (t: number) => number, lo: number, hi: number, falling = false): number {
  const sgn = falling ? -1 : 1;
  for (let i = 0; i < 200; i++) {
    const mid = 0.5 * (lo + hi);
    if (sgn * f(mid) < 0) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

const codes = (i: RingInput) => analyzeRing(i).warnings.map((w) => w.code);

describe("diagnostics", () => {
  it("raises nothing on a clean, complete ring", () => {
    for (const seed of [1, 2]) expect(codes(ring(80, 1, 5000, seed))).toEqual([]);
  });

  it("flags a ring cut off by the capture", () => {
    expect(codes(ring(80, 1, 60, 3))).toContain("RING_TRUNCATED");
  });

  it("flags too few cycles on a heavily damped part", () => {
    expect(codes(ring(2.5, 2, 5000, 4))).toContain("TOO_FEW_CYCLES");
    // 14 edges (6.5 cycles): too few for the stated uncertainty to hold (bench practice).
    expect(codes(ring(5, 2, 5000, 4))).toContain("TOO_FEW_CYCLES");
    expect(codes(ring(12, 2, 5000, 4))).not.toContain("TOO_FEW_CYCLES");
  });

  it("flags thresholds close to the ring amplitude", () => {
    expect(codes(ring(80, 0.08, 5000, 5))).toContain("THRESHOLDS_NEAR_AMPLITUDE");
  });

  it("measures and flags frequency drifting with amplitude", () => {
    // Common bench practice, no source: a class II capacitor moves f by 1e-4-1e-3 over the ring.
    const still = analyzeRing(driftingRing(0, 6));
    expect(still.warnings.map((w) => w.code)).not.toContain("FREQUENCY_DRIFT");
    expect(Math.abs(still.drift!.df_rel)).toBeLessThan(4 * still.drift!.df_rel_u);
    const drifting = analyzeRing(driftingRing(5e-4, 6));
    expect(drifting.warnings.map((w) => w.code)).toContain("FREQUENCY_DRIFT");
    // Frequency falls as the ring decays: the weak half reads lower.
    expect(drifting.drift!.df_rel).toBeLessThan(-1e-4);
    expect(drifting.warnings.find((w) => w.code === "FREQUENCY_DRIFT")!.message).toMatch(/ppm/);
  });

  it("flags a fit whose residuals are correlated (interference on the ring)", () => {
    const clean = ring(80, 1, 5000, 7);
    // A slow disturbance of 40 ns peak moving the edges (e.g. hum coupling into the comparator).
    const ticks = Array.from(clean.ticks, (t, k) => t + Math.round(2.6 * Math.sin(k / 9)));
    for (let k = 1; k < ticks.length; k++) ticks[k] = Math.max(ticks[k], ticks[k - 1]);
    expect(codes({ ...clean, ticks })).toContain("POOR_FIT");
  });

  it("flags a tick rate locked to the ring and widens the uncertainty to cover it", () => {
    // docs/method.md §4: pure quantisation is not i.i.d. With 12.01 ticks per period and
    // 0.3 ns of jitter the quantisation error repeats from edge to edge.
    const tick_hz = 40e6;
    const f = tick_hz / 12.01;
    const c_f = 1e-9;
    const l_h = 1 / ((2 * Math.PI * f) ** 2 * c_f);
    const wave = ringOfQ(l_h, c_f, 100, 1).ring;
    const comp = { rising_v: TH[0], falling_v: TH[1], jitter_s: 0.3e-9, noise_v: 0.2e-3, delay_rise_s: 0, delay_fall_s: 0 };
    const e = captureEdges(wave, comp, { tick_hz, ppm: 0, dead_time_s: 0 }, new Random(3), 5000, 10);
    const a = analyzeRing({ tick_hz, ticks: e.ticks, levels: e.levels, tank_c_f: c_f, thresholds_v: TH, tank_c_u_f: 0, timebase_u_rel: 0 });
    expect(a.warnings.map((w) => w.code)).toContain("POOR_FIT");
    expect(Math.abs(a.inductance_h - l_h)).toBeLessThan(a.inductance_u_h);
  });
});
