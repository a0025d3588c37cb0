// The benchmark's grid of parts and capture settings, and how one noisy capture of a grid point
// is made. Every point is an invented demo part (no product's values), rung through the simulated
// tester's comparator and timer model (host/src/sim/comparator-edges.ts).
//
// Noise: jitter is at least half a tick everywhere, because the tick^2/12 model (and so the bound)
// holds only when quantisation errors are nearly uniform and independent; pure quantisation of
// a slowly drifting phase is not (docs/method.md §4). With jitter = tick/2 the uniform model's
// leading error term is exp(-2 pi^2 (1/2)^2) ~ 0.7 %.

import { ringOfQ, type DampedSine } from "../../../host/src/physics/ring.ts";
import { applyComparator, crossingTimes, ringSlope, type ComparatorModel } from "../../../host/src/sim/comparator-edges.ts";
import { Random } from "../../../host/src/sim/random.ts";
import { ringCramerRao, type RingBound, type RingInput } from "../../../host/src/analysis/index.ts";

export interface GridPoint {
  name: string;
  l_h: number;
  c_f: number;
  q: number;
  /** Initial ring amplitude, volts. */
  a0_v: number;
  /** "sym": VH = -VL = h; "offset": VH = +1.75 h, VL = -0.25 h (docs/method.md §2). */
  thresholds: "sym" | "offset";
  h_v: number;
  tick_hz: number;
  jitter_s: number;
  noise_v: number;
  /** Capture buffer size; a ring longer than this is truncated. */
  max_edges: number;
}

export function thresholdsOf(g: GridPoint): [number, number] {
  return g.thresholds === "sym" ? [g.h_v, -g.h_v] : [1.75 * g.h_v, -0.25 * g.h_v];
}

const T64 = 64e6;
/** Half a tick of 64 MHz: the smallest jitter for which the tick^2/12 model holds. */
const J64 = 0.5 / T64;

// prettier-ignore
export const GRID: GridPoint[] = [
  // 1 µH to 10 µH: small air coils and SMD chips, fast rings, fast timer.
  { name: "1u0-4n7-q40-off", l_h: 1e-6, c_f: 4.7e-9, q: 40, a0_v: 1, thresholds: "offset", h_v: 0.02, tick_hz: 200e6, jitter_s: 2.5e-9, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "1u0-4n7-q40-sym", l_h: 1e-6, c_f: 4.7e-9, q: 40, a0_v: 1, thresholds: "sym", h_v: 0.02, tick_hz: 200e6, jitter_s: 2.5e-9, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "1u0-100n-q2-off", l_h: 1e-6, c_f: 100e-9, q: 2, a0_v: 10, thresholds: "offset", h_v: 0.004, tick_hz: 200e6, jitter_s: 2.5e-9, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "4u7-470p-q300-off", l_h: 4.7e-6, c_f: 470e-12, q: 300, a0_v: 2, thresholds: "offset", h_v: 0.02, tick_hz: 40e6, jitter_s: 12.5e-9, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "10u-10n-q60-sym-vnoise", l_h: 10e-6, c_f: 10e-9, q: 60, a0_v: 1, thresholds: "sym", h_v: 0.02, tick_hz: T64, jitter_s: J64, noise_v: 3e-3, max_edges: 5000 },
  // 22 µH to 1 mH: chokes and filter inductors.
  { name: "22u-10n-q80-sym", l_h: 22e-6, c_f: 10e-9, q: 80, a0_v: 1, thresholds: "sym", h_v: 0.02, tick_hz: T64, jitter_s: J64, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "22u-10n-q80-off", l_h: 22e-6, c_f: 10e-9, q: 80, a0_v: 1, thresholds: "offset", h_v: 0.02, tick_hz: T64, jitter_s: J64, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "150u-47n-q8-off", l_h: 150e-6, c_f: 47e-9, q: 8, a0_v: 2, thresholds: "offset", h_v: 0.02, tick_hz: T64, jitter_s: J64, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "150u-47n-q5-sym", l_h: 150e-6, c_f: 47e-9, q: 5, a0_v: 1, thresholds: "sym", h_v: 0.02, tick_hz: T64, jitter_s: J64, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "330u-22n-q25-off-trunc", l_h: 330e-6, c_f: 22e-9, q: 25, a0_v: 5, thresholds: "offset", h_v: 0.004, tick_hz: T64, jitter_s: J64, noise_v: 0.3e-3, max_edges: 40 },
  { name: "470u-10n-q120-off-jitter", l_h: 470e-6, c_f: 10e-9, q: 120, a0_v: 1, thresholds: "offset", h_v: 0.02, tick_hz: T64, jitter_s: 30e-9, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "1m0-10n-q500-off", l_h: 1e-3, c_f: 10e-9, q: 500, a0_v: 1, thresholds: "offset", h_v: 0.02, tick_hz: T64, jitter_s: J64, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "1m0-10n-q500-sym", l_h: 1e-3, c_f: 10e-9, q: 500, a0_v: 1, thresholds: "sym", h_v: 0.02, tick_hz: T64, jitter_s: J64, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "1m0-10n-q500-off-500", l_h: 1e-3, c_f: 10e-9, q: 500, a0_v: 1, thresholds: "offset", h_v: 0.02, tick_hz: T64, jitter_s: J64, noise_v: 0.3e-3, max_edges: 500 },
  { name: "2m2-10n-q1000-off-5000", l_h: 2.2e-3, c_f: 10e-9, q: 1000, a0_v: 10, thresholds: "offset", h_v: 0.002, tick_hz: T64, jitter_s: J64, noise_v: 0.3e-3, max_edges: 5000 },
  // 4.7 mH to 100 mH: transformer windings, large chokes, slow rings.
  { name: "4m7-1n-q120-off", l_h: 4.7e-3, c_f: 1e-9, q: 120, a0_v: 1, thresholds: "offset", h_v: 0.02, tick_hz: T64, jitter_s: J64, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "4m7-1n-q120-sym", l_h: 4.7e-3, c_f: 1e-9, q: 120, a0_v: 1, thresholds: "sym", h_v: 0.02, tick_hz: T64, jitter_s: J64, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "10m-100n-q15-off-vnoise", l_h: 10e-3, c_f: 100e-9, q: 15, a0_v: 3, thresholds: "offset", h_v: 0.02, tick_hz: 16e6, jitter_s: 31.25e-9, noise_v: 2e-3, max_edges: 5000 },
  { name: "33m-100n-q3-off", l_h: 33e-3, c_f: 100e-9, q: 3, a0_v: 10, thresholds: "offset", h_v: 0.004, tick_hz: 16e6, jitter_s: 31.25e-9, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "33m-100n-q2-sym", l_h: 33e-3, c_f: 100e-9, q: 2, a0_v: 10, thresholds: "sym", h_v: 0.004, tick_hz: 16e6, jitter_s: 31.25e-9, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "100m-1n-q250-off", l_h: 100e-3, c_f: 1e-9, q: 250, a0_v: 1, thresholds: "offset", h_v: 0.02, tick_hz: T64, jitter_s: J64, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "100m-1n-q250-sym", l_h: 100e-3, c_f: 1e-9, q: 250, a0_v: 1, thresholds: "sym", h_v: 0.02, tick_hz: T64, jitter_s: J64, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "100m-10n-q40-off", l_h: 100e-3, c_f: 10e-9, q: 40, a0_v: 2, thresholds: "offset", h_v: 0.02, tick_hz: 16e6, jitter_s: 31.25e-9, noise_v: 0.3e-3, max_edges: 5000 },
  { name: "100m-100n-q10-sym", l_h: 100e-3, c_f: 100e-9, q: 10, a0_v: 2, thresholds: "sym", h_v: 0.02, tick_hz: 16e6, jitter_s: 31.25e-9, noise_v: 0.3e-3, max_edges: 5000 },
];

/** What a grid point's captures share: the exact ring, its noiseless edges and their bound. */
export interface PreparedPoint {
  g: GridPoint;
  ring: DampedSine;
  /** True Q (ring constants, not the nominal g.q rounded). */
  q: number;
  comp: ComparatorModel;
  times_s: number[];
  levels: number[];
  slopes: number[];
  /** The ring died out before the buffer filled: the capture ends on quiet, and says so. */
  ring_ended: boolean;
  bound: RingBound;
}

export function preparePoint(g: GridPoint): PreparedPoint {
  const k = ringOfQ(g.l_h, g.c_f, g.q, g.a0_v);
  const ring = k.ring;
  const [vh, vl] = thresholdsOf(g);
  // A fixed 40 ns propagation delay: constant delays move only the phase (docs/method.md §2).
  const comp: ComparatorModel = { rising_v: vh, falling_v: vl, jitter_s: g.jitter_s, noise_v: g.noise_v, delay_rise_s: 40e-9, delay_fall_s: 40e-9 };
  // The same crossings captureEdges would solve; solved once per point, not once per seed. One
  // more than the buffer tells whether the buffer cut the ring short.
  const cr = crossingTimes(ring, vh, vl, g.max_edges + 1, 10);
  const ring_ended = cr.times.length <= g.max_edges;
  cr.times.length = Math.min(cr.times.length, g.max_edges);
  cr.levels.length = cr.times.length;
  const slopes = cr.times.map((t) => ringSlope(ring, t));
  // Noise only moves edges (no dead time): every capture of the point has these edges, so one
  // Fisher information serves all its seeds.
  const bound = ringCramerRao(
    { wd_rad_s: ring.wd_rad_s, alpha_per_s: ring.alpha_per_s, a0_v: ring.a0_v, tank_c_f: g.c_f },
    { times_s: cr.times, levels: cr.levels },
    { tick_hz: g.tick_hz, sigma_t_s: g.jitter_s, sigma_v_v: g.noise_v }, [vh, vl],
  );
  return { g, ring, q: k.q, comp, times_s: cr.times, levels: cr.levels, slopes, ring_ended, bound };
}

/** One noisy capture of a prepared point, as the analysis receives it. */
export function captureOf(pp: PreparedPoint, seed: number): RingInput {
  const timer = { tick_hz: pp.g.tick_hz, ppm: 0, dead_time_s: 0 };
  const e = applyComparator(pp.times_s, pp.levels, pp.slopes, pp.comp, timer, new Random(seed), pp.g.max_edges);
  return inputOf(pp, e.ticks, e.levels);
}

export function inputOf(pp: PreparedPoint, ticks: number[], levels: number[]): RingInput {
  // C and timebase uncertainties set to zero: the benchmark compares the fit with its bound.
  // ring_ended as the measure layer sets it from a capture that ended on quiet: it tells the
  // fit that the ring did not reach the next threshold, which the edge-time bound ignores.
  return {
    tick_hz: pp.g.tick_hz, ticks, levels, tank_c_f: pp.g.c_f, thresholds_v: thresholdsOf(pp.g),
    tank_c_u_f: 0, timebase_u_rel: 0, ring_ended: pp.ring_ended,
  };
}
