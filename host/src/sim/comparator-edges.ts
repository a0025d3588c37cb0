// Comparator edges of a damped sine (measurement notes §2): a comparator with a rising threshold
// VH and a falling threshold VL (VH > VL, hysteresis) starts low when the switch opens. It goes
// high where v(t) crosses VH upward and low where v(t) crosses VL downward. Crossing times are
// solved exactly on each monotonic segment of the ring, then timing noise and the timer's
// quantisation are applied.

import type { DampedSine } from "../physics/ring.ts";
import { sineValue } from "../physics/ring.ts";
import type { Random } from "./random.ts";

export interface ComparatorModel {
  /** Rising and falling thresholds referred to the ring voltage, volts. */
  rising_v: number;
  falling_v: number;
  /** Gaussian timing jitter, seconds rms (comparator and capture synchroniser). */
  jitter_s: number;
  /** Input-referred voltage noise, volts rms; becomes timing noise through the ring's slope. */
  noise_v: number;
  /** Constant propagation delay, seconds. */
  delay_s: number;
}

export interface TimerModel {
  tick_hz: number;
  /** Crystal error: the timer actually counts at tick_hz * (1 + ppm * 1e-6). */
  ppm: number;
  /** Edges closer than this to the previous captured edge are lost, seconds. */
  dead_time_s: number;
}

export interface EdgeList {
  ticks: number[];
  levels: number[];
}

/** Exact threshold-crossing times (seconds since the switch opened), before noise. */
export function crossingTimes(
  ring: DampedSine, rising_v: number, falling_v: number, max_edges: number, window_s: number,
): { times: number[]; levels: number[] } {
  const times: number[] = [];
  const levels: number[] = [];
  const { alpha_per_s: a, wd_rad_s: wd } = ring;
  // Extremes of e^(-a t) sin(wd t) sit at wd t = atan(wd / a) + n pi.
  const phi = Math.atan2(wd, a);
  let segStart = 0;
  for (let n = 0; times.length < max_edges; n++) {
    const segEnd = (phi + n * Math.PI) / wd;
    if (segStart > window_s) break;
    const rising = n % 2 === 0; // even n: the segment climbs to a maximum
    const level = rising ? rising_v : falling_v;
    const vEnd = sineValue(ring, segEnd);
    const reaches = rising ? vEnd > level : vEnd < level;
    const vStart = sineValue(ring, segStart);
    const startsBefore = rising ? vStart <= level : vStart >= level;
    if (reaches && startsBefore) {
      const t = solveCrossing(ring, level, segStart, segEnd);
      if (t > window_s) break;
      times.push(t);
      levels.push(rising ? 1 : 0);
    } else if (!reaches) {
      break; // the ring no longer reaches this threshold: it has ended for the comparator
    }
    segStart = segEnd;
  }
  return { times, levels };
}

/** Root of v(t) = level on a segment where v is monotonic: Newton guarded by bisection. */
function solveCrossing(ring: DampedSine, level: number, lo: number, hi: number): number {
  const f = (t: number) => sineValue(ring, t) - level;
  let flo = f(lo);
  let t = 0.5 * (lo + hi);
  for (let i = 0; i < 100; i++) {
    const ft = f(t);
    if (ft === 0) return t;
    if (Math.sign(ft) === Math.sign(flo)) {
      lo = t;
      flo = ft;
    } else {
      hi = t;
    }
    const e = Math.exp(-ring.alpha_per_s * t);
    const slope = ring.a0_v * e * (ring.wd_rad_s * Math.cos(ring.wd_rad_s * t) - ring.alpha_per_s * Math.sin(ring.wd_rad_s * t));
    let next = t - ft / slope;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - t) <= 1e-16 * Math.max(t, 1e-12) || hi - lo <= 4e-16 * hi) return next;
    t = next;
  }
  return t;
}

/** Slope of the ring at t, volts per second. */
export function ringSlope(ring: DampedSine, t: number): number {
  const e = Math.exp(-ring.alpha_per_s * t);
  return ring.a0_v * e * (ring.wd_rad_s * Math.cos(ring.wd_rad_s * t) - ring.alpha_per_s * Math.sin(ring.wd_rad_s * t));
}

/**
 * Captured edges: crossings plus timing noise, delay, crystal error, tick quantisation and the
 * capture's dead time. Deterministic for a given Random state.
 */
export function captureEdges(
  ring: DampedSine, comp: ComparatorModel, timer: TimerModel, rng: Random,
  max_edges: number, window_s: number,
): EdgeList {
  const { times, levels } = crossingTimes(ring, comp.rising_v, comp.falling_v, max_edges, window_s);
  const rate = timer.tick_hz * (1 + timer.ppm * 1e-6);
  const ticks: number[] = [];
  const outLevels: number[] = [];
  let lastT = -Infinity;
  for (let k = 0; k < times.length; k++) {
    const slope = Math.abs(ringSlope(ring, times[k]));
    const sigmaV = slope > 0 ? comp.noise_v / slope : 0;
    const t = times[k] + comp.delay_s + comp.jitter_s * rng.normal() + sigmaV * rng.normal();
    if (t - lastT < timer.dead_time_s || t < 0) continue;
    lastT = t;
    ticks.push(Math.floor(t * rate));
    outLevels.push(levels[k]);
  }
  // Noise can reorder two close edges; the timer cannot, so keep the record monotonic.
  for (let k = 1; k < ticks.length; k++) if (ticks[k] < ticks[k - 1]) ticks[k] = ticks[k - 1];
  return { ticks, levels: outLevels };
}
