// The comparator as a real part makes its edges (docs/hardware.md, "Comparator model and its
// validation"): the decision is the first passage of ring + continuous band-limited input noise
// across the threshold of the current output state (hysteresis re-arm: after a rising decision it
// waits for v + n <= falling threshold, and vice versa), found by first-passage.ts. Each decision
// then takes its level's propagation delay, the overdrive delay sqrt(2 q / |slope|) (an
// integrator reaching q volt-seconds of overdrive on a ramp), white timing jitter, and the timer:
// crystal error, flooring to ticks, dead time after the previous captured edge, monotonic ticks,
// the buffer's size. Seeded and deterministic.

import type { DampedSine } from "../physics/ring.ts";
import type { RingWave } from "../physics/ring-wave.ts";
import type { Waveform } from "../physics/waveform.ts";
import { splineWaveform, waveformOfRing } from "../physics/waveform.ts";
import type { EdgeList, TimerModel } from "./comparator-edges.ts";
import { FirstPassageWalker, type FirstPassageOptions } from "./first-passage.ts";
import { Random } from "./random.ts";

export type { Waveform } from "../physics/waveform.ts";

/** The closed-form ring (or a plain damped sine) as a Waveform. */
export function ringWaveform(r: RingWave | DampedSine): Waveform {
  return waveformOfRing(r);
}

/** A sampled waveform (e.g. an ngspice transient), interpolated smoothly (natural cubic spline). */
export function sampledWaveform(times_s: ArrayLike<number>, values_v: ArrayLike<number>): Waveform {
  return splineWaveform(times_s, values_v);
}

export interface PhysicalComparator {
  /** Thresholds referred to the ring, volts (hysteresis: rising > falling). */
  rising_v: number;
  falling_v: number;
  /** Input offset, added to both. */
  offset_v?: number;
  /** Propagation delay of a low->high output transition, seconds. */
  delay_rise_s: number;
  /** ... of a high->low transition (skew = delay_rise_s - delay_fall_s). */
  delay_fall_s: number;
  /** Overdrive-dependent delay: extra sqrt(2 q / |slope|) (integrator law), volt-seconds. */
  overdrive_v_s?: number;
  /** White timing jitter, seconds rms. */
  jitter_s: number;
  /** Continuous input-referred noise, volts rms. */
  noise_v: number;
  /** Its first-order (one-pole) bandwidth, Hz. */
  noise_bw_hz: number;
}

export interface PhysicalEdgeOptions extends FirstPassageOptions {
  max_edges: number;
  window_s: number;
  /** Filled with the walker's deterministic work counts when given. */
  work?: { decisions: number; evaluations: number; draws: number };
}

/**
 * Comparator edges as a real part makes them: the decision is the FIRST PASSAGE of v(t) + n(t)
 * across the threshold of the current output state (hysteresis re-arm included), n a continuous
 * first-order band-limited (Ornstein-Uhlenbeck) process; then the level's propagation delay, the
 * overdrive delay, jitter, and the timer (crystal error, quantisation, dead time, buffer size).
 * The comparator starts low. Seeded and deterministic.
 */
export function physicalEdges(w: Waveform, comp: PhysicalComparator, timer: TimerModel, rng: Random, opts: PhysicalEdgeOptions): EdgeList {
  const off = comp.offset_v ?? 0;
  const thRise = comp.rising_v + off;
  const thFall = comp.falling_v + off;
  const tau = 1 / (2 * Math.PI * comp.noise_bw_hz);
  const walker = new FirstPassageWalker(w, { sigma_v: comp.noise_v, tau_s: tau }, rng, opts);
  const end = Math.min(w.end_s, opts.window_s);
  const rate = timer.tick_hz * (1 + timer.ppm * 1e-6);
  const q = comp.overdrive_v_s ?? 0;
  // The overdrive of a noise-driven decision grows at least at the noise's own pace, sigma / tau.
  const slopeFloor = comp.noise_v > 0 ? comp.noise_v / tau : 1e-300;
  const ticks: number[] = [];
  const levels: number[] = [];
  let high = false;
  let lastT = -Infinity;
  let decisions = 0;
  while (ticks.length < opts.max_edges) {
    const d = high ? walker.next(thFall, -1, end) : walker.next(thRise, 1, end);
    if (!d) break;
    decisions++;
    high = !high;
    const overdrive = q > 0 ? Math.sqrt((2 * q) / Math.max(Math.abs(d.slope_v_s), slopeFloor)) : 0;
    const t = d.t_s + (high ? comp.delay_rise_s : comp.delay_fall_s) + overdrive + comp.jitter_s * rng.normal();
    if (t - lastT < timer.dead_time_s || t < 0) continue;
    lastT = t;
    ticks.push(Math.floor(t * rate));
    levels.push(high ? 1 : 0);
  }
  // Jitter and unequal delays can reorder two close edges; the timer cannot.
  for (let k = 1; k < ticks.length; k++) if (ticks[k] < ticks[k - 1]) ticks[k] = ticks[k - 1];
  if (opts.work) {
    opts.work.decisions += decisions;
    opts.work.evaluations += walker.evaluations;
    opts.work.draws += walker.draws;
  }
  return { ticks, levels };
}

/** A rising ramp v(t) = slope (t - t_cross) as a Waveform, exact nextReach. */
export function rampWaveform(slope_v_per_s: number, t_cross_s: number, end_s: number): Waveform {
  return {
    end_s,
    value: (t) => slope_v_per_s * (t - t_cross_s),
    slope: () => slope_v_per_s,
    amplitudeAfter: () => Infinity,
    curvatureAfter: () => 0,
    nextReach: (t, level, dir) => {
      const at = t_cross_s + level / slope_v_per_s;
      if (dir * slope_v_per_s > 0) return Math.max(t, at);
      return dir * (slope_v_per_s * (t - t_cross_s) - level) >= 0 ? t : Infinity;
    },
  };
}

/**
 * First-passage shift of a comparator decision on a linear rising ramp, by Monte Carlo: the mean
 * and the standard deviation of (first passage of ramp + OU noise across 0) minus (the ramp's own
 * crossing), seconds. Negative: noise makes a slow ramp's edge early. A cross-check for the
 * analysis; the simulator itself does not use it.
 */
export function firstPassageShift(
  slope_v_per_s: number, sigma_v: number, tau_s: number,
  opts: { trials?: number; seed?: number; resolution_s?: number } = {},
): { mean_s: number; sd_s: number; sem_s: number } {
  const trials = opts.trials ?? 2000;
  const rng = new Random(opts.seed ?? 1);
  // Start the ramp far enough below the threshold that the noise starts stationary and far.
  const lead_s = (12 * sigma_v) / slope_v_per_s + 5 * tau_s;
  const w = rampWaveform(slope_v_per_s, lead_s, Infinity);
  let s = 0;
  let s2 = 0;
  for (let k = 0; k < trials; k++) {
    const walker = new FirstPassageWalker(w, { sigma_v, tau_s }, rng, { resolution_s: opts.resolution_s ?? Math.min(50e-12, tau_s / 1000) });
    const d = walker.next(0, 1, Infinity)!;
    const x = d.t_s - lead_s;
    s += x;
    s2 += x * x;
  }
  const mean = s / trials;
  const sd = Math.sqrt(Math.max(s2 / trials - mean * mean, 0) * (trials / (trials - 1)));
  return { mean_s: mean, sd_s: sd, sem_s: sd / Math.sqrt(trials) };
}
