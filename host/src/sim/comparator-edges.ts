// Comparator edges of a ring (docs/method.md §2). The comparator has a rising threshold VH
// and a falling threshold VL (VH > VL: hysteresis), both shifted by its input offset, and starts
// low when the switch opens. It goes high where v(t) crosses VH upward and low where v(t) crosses
// VL downward.
//
// Two noise models. The simulated tester's: continuous band-limited input noise, the decision
// being the first passage of ring + noise (comparator-physics.ts), used by captureEdges whenever
// the comparator has a noise bandwidth. The per-crossing model: crossing times solved exactly on
// each monotonic stretch of the ring, one noise value per crossing (applyComparator), kept for
// white noise and for the analysis benchmark's grid so its figures stay comparable. Both apply
// the same timing (rise and fall delays, overdrive delay, jitter) and timer (crystal error, tick
// quantisation, dead time between captures, buffer size). Deterministic for a given Random state.

import type { DampedSine } from "../physics/ring.ts";
import type { RingWave } from "../physics/ring-wave.ts";
import { sineWave, waveExtremum, waveSlope, waveValue } from "../physics/ring-wave.ts";
import { physicalEdges, ringWaveform } from "./comparator-physics.ts";
import type { Random } from "./random.ts";

export interface ComparatorModel {
  /** Rising and falling thresholds referred to the ring voltage, volts (nominal design values). */
  rising_v: number;
  falling_v: number;
  /** Input offset voltage, added to both thresholds. Default 0. */
  offset_v?: number;
  /** Gaussian timing jitter, seconds rms (comparator and capture synchroniser). */
  jitter_s: number;
  /** Input-referred voltage noise, volts rms; becomes timing noise through the ring's slope. */
  noise_v: number;
  /** Noise bandwidth (first-order), Hz; edges closer than 1/(2 pi bw) see correlated noise. Default: white. */
  noise_bw_hz?: number;
  /** Propagation delay of a low->high output transition, seconds. */
  delay_rise_s: number;
  /** Propagation delay of a high->low output transition, seconds (skew = rise - fall). */
  delay_fall_s: number;
  /**
   * Overdrive-dependent delay: the comparator switches once the overdrive integrated over time
   * reaches this many volt-seconds, so a ramp of slope S adds sqrt(2 q / S). Default 0.
   */
  overdrive_v_s?: number;
  /**
   * How input noise decides an edge. "first-passage" (the default when noise_bw_hz is set, or
   * when there is no noise): the first time ring + continuous noise reaches the threshold.
   * "per-crossing": one noise value added to the threshold per crossing (the only choice for
   * white noise, where a first passage is not defined).
   */
  noise_model?: "first-passage" | "per-crossing";
}

/** True when captureEdges decides this comparator's edges by first passage. */
export function usesFirstPassage(comp: ComparatorModel): boolean {
  if (comp.noise_model === "per-crossing") return false;
  const bw = comp.noise_bw_hz;
  return comp.noise_v === 0 || (bw !== undefined && Number.isFinite(bw) && bw > 0);
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

type Ring = RingWave | DampedSine;

function asWave(r: Ring): RingWave {
  return "a0_v" in r ? sineWave(r.a0_v, r.alpha_per_s, r.wd_rad_s) : r;
}

/** Exact threshold-crossing times (seconds since the switch opened) and levels, before noise. */
export function crossingTimes(
  ring: Ring, rising_v: number, falling_v: number, max_edges: number, window_s: number,
  /** Input noise at the k-th crossing attempt, added to the threshold (default none). */
  noiseAt?: (k: number, t_s: number) => number,
): { times: number[]; levels: number[] } {
  const w = asWave(ring);
  const times: number[] = [];
  const levels: number[] = [];
  let high = false;
  let segStart = 0;
  let attempt = 0;
  // Stretch n runs from extremum n-1 to extremum n; even n climbs to a maximum.
  let n = 0;
  while (waveExtremum(w, n) <= 0) n++;
  for (; times.length < max_edges; n++) {
    const segEnd = waveExtremum(w, n);
    if (segStart > window_s) break;
    const climbing = n % 2 === 0;
    const vEnd = waveValue(w, segEnd);
    if (climbing !== high) {
      // The comparator compares with its threshold plus the input noise at that moment: near
      // the end of the ring a noisy peak may or may not reach it, as on a real comparator.
      const level = (climbing ? rising_v : falling_v) + (noiseAt ? noiseAt(attempt++, segStart) : 0);
      const reaches = climbing ? vEnd > level : vEnd < level;
      const vStart = waveValue(w, segStart);
      const before = climbing ? vStart <= level : vStart >= level;
      if (reaches && before) {
        times.push(solveCrossing(w, level, segStart, segEnd));
        levels.push(climbing ? 1 : 0);
        high = climbing;
      } else if (!reaches && (n > 1 || !climbing)) break; // extremes no longer reach the threshold: the ring has ended
    }
    segStart = segEnd;
  }
  while (times.length > 0 && times[times.length - 1] > window_s) {
    times.pop();
    levels.pop();
  }
  return { times, levels };
}

/** Root of v(t) = level inside [lo, hi] where v - level changes sign: Newton guarded by bisection. */
function solveCrossing(w: RingWave, level: number, lo: number, hi: number): number {
  const f = (t: number) => waveValue(w, t) - level;
  let flo = f(lo);
  let t = 0.5 * (lo + hi);
  for (let i = 0; i < 200; i++) {
    const ft = f(t);
    if (ft === 0) return t;
    if (Math.sign(ft) === Math.sign(flo)) {
      lo = t;
      flo = ft;
    } else {
      hi = t;
    }
    let next = t - ft / waveSlope(w, t);
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - t) <= 1e-16 * Math.max(t, 1e-12) || hi - lo <= 4e-16 * hi) return next;
    t = next;
  }
  return t;
}

/** Slope of the ring at t, volts per second. */
export function ringSlope(ring: Ring, t: number): number {
  return waveSlope(asWave(ring), t);
}

/**
 * Captured edges of an exactly solved ring, with comparator timing and the timer applied: by
 * first passage (physicalEdges) when usesFirstPassage(comp), else per crossing.
 */
export function captureEdges(
  ring: Ring, comp: ComparatorModel, timer: TimerModel, rng: Random, max_edges: number, window_s: number,
): EdgeList {
  if (usesFirstPassage(comp)) {
    return physicalEdges(ringWaveform(ring), { ...comp, noise_bw_hz: comp.noise_bw_hz ?? 1e9 }, timer, rng, { max_edges, window_s });
  }
  const w = asWave(ring);
  const offset = comp.offset_v ?? 0;
  // First-order (Ornstein-Uhlenbeck) input noise, sampled at each crossing attempt and added to
  // the threshold, so a crossing moves by exactly as much as the ring's shape says (and a
  // grazing peak may be missed), not by a slope-linearised amount.
  const tauNoise = comp.noise_bw_hz ? 1 / (2 * Math.PI * comp.noise_bw_hz) : 0;
  let noise = comp.noise_v * rng.normal();
  let lastT = 0;
  const noiseAt = (k: number, t: number) => {
    if (k > 0) {
      const rho = tauNoise > 0 ? Math.exp(-Math.max(t - lastT, 0) / tauNoise) : 0;
      noise = rho * noise + comp.noise_v * Math.sqrt(1 - rho * rho) * rng.normal();
    }
    lastT = t;
    return noise;
  };
  // Solve for a few more crossings than the buffer holds: the dead time may drop some.
  const { times, levels } = crossingTimes(w, comp.rising_v + offset, comp.falling_v + offset, max_edges + 64, window_s, noiseAt);
  return applyComparator(times, levels, times.map((t) => waveSlope(w, t)), { ...comp, noise_v: 0 }, timer, rng, max_edges);
}

/**
 * From exact threshold crossings (times, levels, ring slope at each) to captured ticks: the
 * level's delay, overdrive delay, jitter, band-limited noise through the slope, crystal error, quantisation,
 * dead time and the buffer's capacity.
 */
export function applyComparator(
  times: readonly number[], levels: readonly number[], slopes: readonly number[],
  comp: ComparatorModel, timer: TimerModel, rng: Random, max_edges: number,
): EdgeList {
  const rate = timer.tick_hz * (1 + timer.ppm * 1e-6);
  const ticks: number[] = [];
  const outLevels: number[] = [];
  const tauNoise = comp.noise_bw_hz ? 1 / (2 * Math.PI * comp.noise_bw_hz) : 0;
  let noise = comp.noise_v * rng.normal();
  let lastT = -Infinity;
  for (let k = 0; k < times.length && ticks.length < max_edges; k++) {
    if (k > 0) {
      // First-order (Ornstein-Uhlenbeck) noise sampled at the crossing instants.
      const rho = tauNoise > 0 ? Math.exp(-(times[k] - times[k - 1]) / tauNoise) : 0;
      noise = rho * noise + comp.noise_v * Math.sqrt(1 - rho * rho) * rng.normal();
    }
    const slope = Math.abs(slopes[k]);
    const noiseShift = slope > 0 ? noise / slope : 0;
    const overdrive = comp.overdrive_v_s && slope > 0 ? Math.sqrt((2 * comp.overdrive_v_s) / slope) : 0;
    const delay = levels[k] === 1 ? comp.delay_rise_s : comp.delay_fall_s;
    const t = times[k] + delay + overdrive + comp.jitter_s * rng.normal() + noiseShift;
    if (t - lastT < timer.dead_time_s || t < 0) continue;
    lastT = t;
    ticks.push(Math.floor(t * rate));
    outLevels.push(levels[k]);
  }
  // Noise can reorder two close edges; the timer cannot, so keep the record monotonic.
  for (let k = 1; k < ticks.length; k++) if (ticks[k] < ticks[k - 1]) ticks[k] = ticks[k - 1];
  return { ticks, levels: outLevels };
}
