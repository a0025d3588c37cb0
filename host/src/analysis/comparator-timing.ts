// What a real comparator does to edge times, beyond the thresholds (docs/method.md §2a):
//
// - skew: the rising output takes a different propagation delay from the falling one; rising
//   edges come later by skew = delay_rise - delay_fall, a constant in time (a threshold offset
//   instead moves an edge by dV/slope, which grows as the ring decays). Estimated from the capture
//   jointly with the ring, with the caller's value (calibration, or the board's prior) as prior
//   information of its uncertainty;
// - first passage: with continuous band-limited input noise the comparator decides at the first
//   time ring + noise reaches the threshold, so an edge on a slope S comes early by a mean
//   shift tau * mu(S tau / sigma) (firstPassageShift) and scatters less than sigma / S;
// - overdrive delay: an integrating input stage switches after q volt-seconds of overdrive, so an
//   edge on a slope S comes sqrt(2 q / S) late; the slope is taken as at least sigma / tau, the
//   noise's own pace.
//
// The common part of any delay only moves the phase (and ln A0); what biases L and Q is how the
// delay differs between levels and changes along the decay. The fit corrects the edge times by
// the predicted delays (timingCorrections), and what is not known exactly enters the covariance
// (timingCovariance): skew through the joint estimate, the first-passage model and the overdrive
// charge as Type B terms (JCGM 100:2008 §4.3).

import { N_PARAMS, P_ALPHA, P_LNA, P_WD } from "./edge-model.ts";
import { invertSymmetric } from "./small-linear-algebra.ts";

/** The comparator's timing as the caller knows it (all optional but the skew). */
export interface ComparatorTiming {
  /** Rising-edge propagation delay minus falling-edge delay, seconds (best estimate). */
  skew_s: number;
  /** Its standard uncertainty, seconds; Infinity: unknown, estimated from the capture alone. */
  skew_u_s: number;
  /** Where skew_s comes from, for messages ("calibration", "board prior"). */
  skew_source?: string;
  /**
   * First-order bandwidth of the comparator's continuous input noise, Hz. When given, edges are
   * corrected for the first-passage shift (noise rms from the fit). Absent: the noise is taken
   * as one independent value per crossing (no shift).
   */
  noise_bw_hz?: number;
  /**
   * Rms of that noise, volts (referred to the ring, like the thresholds): the board's value. The
   * larger of it and the fit's estimate is used (first passage makes slow edges scatter less than
   * sigma / slope, so the fit's estimate reads low when the noise is as given, and the given value
   * reads low when the noise is larger than designed). Default: the fit's estimate alone.
   */
  noise_v?: number;
  /** Overdrive charge q of the input stage, volt-seconds (delay sqrt(2 q / |slope|)). */
  overdrive_v_s?: number;
  /** Its standard uncertainty; default half of overdrive_v_s. */
  overdrive_u_v_s?: number;
}

/**
 * Relative standard uncertainty of the first-passage correction as a whole: the table's Monte
 * Carlo error is under 1 %, but a ring is a ramp only near its zero crossings (curvature, the
 * hysteresis re-arm) and the noise rms and bandwidth come from the fit and the board's nominal
 * values. 25 % (bench practice, no source): the realistic-comparator benchmark's coverage holds
 * with it.
 */
export const FIRST_PASSAGE_U_REL = 0.25;
/**
 * ... and this much when the noise rms behind the shifts had to be read from the edges' scatter
 * (larger than the caller's value: firstPassageSigma), which rests on the table's spread ratio at
 * the fitted slopes; the shift grows about as sigma^1.3 near x = 1 (bench practice, no source: at
 * three times the board's noise a 34 kHz Q 1000 ring's U(Q) covered 84 % of the seeds with 25 %).
 */
export const FIRST_PASSAGE_U_REL_READ = 0.5;

// Mean first-passage shift of ramp + stationary first-order (Ornstein-Uhlenbeck) noise across a
// fixed level, against the ramp's own crossing, in units of tau, for x = S tau / sigma; and the
// spread of the decision time over the per-crossing sigma / S. Monte Carlo of the simulator's
// first-passage walker (host/src/sim/first-passage.ts, validated against an independent brute-force
// reference, docs/hardware.md), 20 000 paths a point; the standard errors are FP_SEM_TAU.
// prettier-ignore
const FP_X = [0.02, 0.03, 0.05, 0.07, 0.1, 0.15, 0.2, 0.3, 0.5, 0.7, 1, 1.5, 2, 3, 5, 7, 10, 15, 20, 30, 50];
// prettier-ignore
const FP_MEAN_TAU = [129.3, 80.61, 43.92, 29.32, 18.8, 11.22, 7.688, 4.378, 2.116, 1.246, 0.7065, 0.3607, 0.2161, 0.1067, 0.03741, 0.01942, 0.01023, 0.004085, 0.002269, 0.0008702, 0.0003711];
// prettier-ignore
export const FP_SEM_TAU = [0.17, 0.12, 0.076, 0.057, 0.042, 0.03, 0.024, 0.017, 0.011, 0.0083, 0.0061, 0.0043, 0.0033, 0.0023, 0.0014, 0.001, 0.0007, 0.00047, 0.00036, 0.00023, 0.00014];
// prettier-ignore
const FP_SD_RATIO = [0.472, 0.497, 0.539, 0.565, 0.597, 0.638, 0.673, 0.718, 0.780, 0.821, 0.865, 0.912, 0.938, 0.968, 0.989, 0.992, 0.992, 0.998, 1.005, 0.997, 1.004];
const LN_X = FP_X.map(Math.log);
const LN_MEAN = FP_MEAN_TAU.map(Math.log);

/** Piecewise-linear interpolation in (ln x, y), extrapolated linearly past the ends. */
function interp(lx: number, ys: readonly number[]): number {
  const n = LN_X.length;
  let i = 0;
  if (lx >= LN_X[n - 1]) i = n - 2;
  else if (lx > LN_X[0]) while (LN_X[i + 1] < lx) i++;
  const f = (lx - LN_X[i]) / (LN_X[i + 1] - LN_X[i]);
  return ys[i] + f * (ys[i + 1] - ys[i]);
}

/**
 * Mean first-passage shift (negative: early) of a decision on a slope S = x sigma / tau, in units
 * of tau. Log-log interpolation of the table; past x = 50 the shift falls as 1/x^2 (the table's
 * own trend from x = 20 on), below x = 0.02 it follows the table's slope.
 */
export function firstPassageShift(x: number): number {
  if (!(x > 0)) return NaN;
  const lx = Math.log(x);
  if (lx > LN_X[LN_X.length - 1]) return -FP_MEAN_TAU[FP_MEAN_TAU.length - 1] * Math.exp(2 * (LN_X[LN_X.length - 1] - lx));
  return -Math.exp(interp(lx, LN_MEAN));
}

/** Spread of the first-passage decision time over the per-crossing sigma / S (1 for fast edges). */
export function firstPassageSpreadRatio(x: number): number {
  if (!(x > 0)) return NaN;
  const lx = Math.log(x);
  if (lx >= LN_X[LN_X.length - 1]) return 1;
  return Math.min(1, Math.max(FP_SD_RATIO[0], interp(Math.max(lx, LN_X[0]), FP_SD_RATIO)));
}

/** Per-edge delays the model does not contain, seconds, split by cause. */
export interface TimingDelays {
  /** First-passage shift per edge (negative), overdrive delay per edge. */
  fp_s: Float64Array;
  od_s: Float64Array;
  /** The noise rms behind fp_s was read from the scatter, above the caller's value. */
  noise_read?: boolean;
}

/**
 * The first-passage and overdrive delays at each clean crossing (`clean[k] > 0`: a phase-form
 * edge, where the ring crosses its threshold as a ramp), from the ring's slope there (V/s,
 * `slope`), the fitted input noise rms `sigma_v` and the comparator's timing. Each delay is
 * limited to `max_s[k]` (the ramp picture holds only while the slope changes little over the
 * shift: rampReach); the table is not extrapolated below its slowest point. Other edges get zero.
 */
export function edgeDelays(
  slope: ArrayLike<number>, clean: ArrayLike<number>, sigma_v: number, timing: ComparatorTiming, max_s: ArrayLike<number>,
  /** The timing variance besides the voltage noise's (tick^2/12 + jitter^2), s^2: with it the
   *  fit's sigma_v is read as first-passage scatter (firstPassageSigma). */
  other_var_s2?: number,
): TimingDelays {
  const n = slope.length;
  const tau = timing.noise_bw_hz && timing.noise_bw_hz > 0 ? 1 / (2 * Math.PI * timing.noise_bw_hz) : 0;
  if (tau > 0 && other_var_s2 !== undefined) sigma_v = firstPassageSigma(slope, clean, sigma_v, tau, other_var_s2);
  const given = timing.noise_v !== undefined && timing.noise_v >= 0 ? timing.noise_v : 0;
  const read = sigma_v > given;
  sigma_v = Math.max(sigma_v, given);
  const fp = new Float64Array(n);
  const od = new Float64Array(n);
  const q = timing.overdrive_v_s ?? 0;
  const floor = tau > 0 && sigma_v > 0 ? sigma_v / tau : 0;
  for (let k = 0; k < n; k++) {
    if (!(clean[k] > 0)) continue;
    const s = Math.abs(slope[k]);
    if (!(s > 0)) continue;
    if (tau > 0 && sigma_v > 0) fp[k] = Math.max(-max_s[k], tau * firstPassageShift(Math.max((s * tau) / sigma_v, FP_X[0])));
    if (q > 0) od[k] = Math.min(max_s[k], Math.sqrt((2 * q) / Math.max(s, floor)));
  }
  return { fp_s: fp, od_s: od, noise_read: read };
}

/**
 * The noise rms behind a fit's voltage-noise estimate when edges decide by first passage: the
 * fit reads sigma_fit^2 as a weighted mean of (rho_k sigma)^2, rho_k the first-passage spread
 * ratio at edge k (firstPassageSpreadRatio), weighted like the fit's regression where the voltage
 * term dominates (by the square of its share of the edge's timing variance); a few fixed-point
 * steps of sigma = sigma_fit / rho_mean(sigma).
 */
export function firstPassageSigma(slope: ArrayLike<number>, clean: ArrayLike<number>, sigma_fit: number, tau: number, other_var_s2: number): number {
  if (!(sigma_fit > 0)) return sigma_fit;
  let sigma = sigma_fit;
  for (let it = 0; it < 4; it++) {
    let sw = 0, swr = 0;
    for (let k = 0; k < slope.length; k++) {
      if (!(clean[k] > 0)) continue;
      const s = Math.abs(slope[k]);
      if (!(s > 0)) continue;
      const vv = (sigma / s) ** 2;
      const share = vv / (vv + other_var_s2);
      const w = share * share;
      const rho = firstPassageSpreadRatio((s * tau) / sigma);
      sw += w;
      swr += w * rho * rho;
    }
    if (!(sw > 0)) return sigma_fit;
    sigma = sigma_fit / Math.sqrt(swr / sw);
  }
  return sigma;
}

/**
 * How far in time a crossing on a ring of angular frequency wd is taken to stay a ramp: `rad` of
 * ring phase (a quarter period is the whole way from a zero crossing to a peak).
 */
export function rampReach(wd: number, rad: number): number {
  return rad / wd;
}

/**
 * Linear pieces of a converged fit that the timing terms need: residuals r, their Jacobian jac
 * (n x 4), dr/dt per edge (slope) and the weights (used / variance).
 */
export interface LinearFit {
  r: ArrayLike<number>;
  jac: ArrayLike<number>;
  slope: ArrayLike<number>;
  w: ArrayLike<number>;
  rising: ArrayLike<number>;
}

/** N = J^T W J, and b = J^T W v for a per-edge column v. */
function normal(f: LinearFit): Float64Array {
  const N = new Float64Array(16);
  const n = f.w.length;
  for (let k = 0; k < n; k++) {
    const w = f.w[k];
    if (!(w > 0)) continue;
    const o = 4 * k;
    for (let i = 0; i < 4; i++) for (let j = i; j < 4; j++) N[4 * i + j] += w * f.jac[o + i] * f.jac[o + j];
  }
  for (let i = 0; i < 4; i++) for (let j = 0; j < i; j++) N[4 * i + j] = N[4 * j + i];
  return N;
}

function project(f: LinearFit, col: (k: number) => number): { b: Float64Array; c: number; g: number } {
  const b = new Float64Array(4);
  let c = 0, g = 0;
  const n = f.w.length;
  for (let k = 0; k < n; k++) {
    const w = f.w[k];
    if (!(w > 0)) continue;
    const v = col(k);
    if (v === 0) continue;
    const o = 4 * k;
    for (let i = 0; i < 4; i++) b[i] += w * f.jac[o + i] * v;
    c += w * v * v;
    g += w * v * f.r[k];
  }
  return { b, c, g };
}

function mulVec(m: Float64Array, v: Float64Array): Float64Array {
  const out = new Float64Array(4);
  for (let i = 0; i < 4; i++) for (let j = 0; j < 4; j++) out[i] += m[4 * i + j] * v[j];
  return out;
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

/** The capture's own skew information at a converged fit. */
export interface SkewStep {
  /** Gauss-Newton step in skew from the capture alone (no prior), seconds, and its sd; NaN when
   *  the capture says nothing about skew. */
  capture_step_s: number;
  capture_sd_s: number;
  /** Step with the prior of standard uncertainty prior_u_s about prior_offset_s (prior minus the
   *  skew assumed in the fit). */
  step_s: number;
}

/**
 * One Gauss-Newton step for the skew, jointly with the four ring parameters (the ring's are
 * profiled out: the fit has converged at the assumed skew). A rising edge's residual moves by
 * -slope per second of extra rising delay.
 */
export function skewStep(f: LinearFit, prior_offset_s: number, prior_u_s: number): SkewStep {
  const N = normal(f);
  const Ninv = invertSymmetric(4, N);
  if (!Ninv) return { capture_step_s: NaN, capture_sd_s: NaN, step_s: 0 };
  const { b, c, g } = project(f, (k) => (f.rising[k] === 1 ? -f.slope[k] : 0));
  // Gradient of chi2/2 in the ring parameters (~0 at convergence).
  const g4 = project4(f);
  const nb = mulVec(Ninv, b);
  const schur = c - dot(b, nb);
  if (!(schur > 0)) return { capture_step_s: NaN, capture_sd_s: NaN, step_s: 0 };
  const gEff = g - dot(nb, g4);
  const capture = -gEff / schur;
  const pi = Number.isFinite(prior_u_s) && prior_u_s > 0 ? 1 / (prior_u_s * prior_u_s) : 0;
  const step = prior_u_s === 0 ? 0 : (-gEff + pi * prior_offset_s) / (schur + pi);
  return { capture_step_s: capture, capture_sd_s: 1 / Math.sqrt(schur), step_s: step };
}

function project4(f: LinearFit): Float64Array {
  const g = new Float64Array(4);
  const n = f.w.length;
  for (let k = 0; k < n; k++) {
    const w = f.w[k];
    if (!(w > 0)) continue;
    const o = 4 * k;
    for (let i = 0; i < 4; i++) g[i] += w * f.jac[o + i] * f.r[k];
  }
  return g;
}

/** Linear change of (wd, alpha) that a change `dd_s` of the edge delays makes, over their sd. */
export function delayEffectSd(f: LinearFit, dd_s: ArrayLike<number>): number {
  const N = normal(f);
  const Ninv = invertSymmetric(4, N);
  if (!Ninv) return Infinity;
  const { b } = project(f, (k) => -f.slope[k] * dd_s[k]);
  const s = mulVec(Ninv, b);
  // The fit moves by -N^-1 b when the delays are taken out of the times.
  return Math.max(Math.abs(s[P_WD]) / Math.sqrt(Ninv[5 * P_WD]), Math.abs(s[P_ALPHA]) / Math.sqrt(Ninv[5 * P_ALPHA]));
}

/**
 * The ring's slope |dv/dt| (V/s) where the model p crosses level V at time t (rising or falling
 * edge): A(t) sqrt(1 - u^2) |wd - alpha c|, u = V / A(t), c = +-u / sqrt(1 - u^2) (edge-model.ts).
 */
export function ringSlopeAt(p: ArrayLike<number>, t: number, level_v: number, rising: boolean): number {
  const a = Math.exp(p[P_LNA] - p[P_ALPHA] * t);
  const u = level_v / a;
  const sq = Math.sqrt(Math.max(1 - u * u, 1e-6));
  const c = (rising ? u : -u) / sq;
  return a * sq * Math.abs(p[P_WD] - p[P_ALPHA] * c);
}

/** The last step and the added covariance of the timing terms (jointTimingStep). */
export interface JointTiming {
  /** Gauss-Newton step of the ring parameters and of the skew. */
  dp: Float64Array;
  dskew_s: number;
  /** Covariance the timing terms add to the ring parameters' (4 x 4), before the fit's
   *  inflation: the skew estimated with them, and the Type B terms. */
  added_cov: Float64Array;
  /** Standard deviation of the skew after capture and prior (0 when it is not estimated). */
  skew_sd_s: number;
  /** (J^T W J)^-1 [alpha, alpha] of the plain fit, to carry its inflation over. */
  base_alpha_var: number;
}

/**
 * One Gauss-Newton step of the ring parameters with the skew as a fifth parameter (column -slope
 * on rising edges; prior_u_s: 0 not estimated, Infinity no prior; prior_offset_s = prior skew -
 * assumed skew), from a fit converged at the assumed skew; and the covariance this adds to the
 * plain fit's, with the Type B terms of the first-passage model and the overdrive charge
 * propagated through the same system (JCGM 100:2008 §5.1). The delays' own dependence on the
 * ring parameters is not differentiated: where it is steep (slow tail edges) it would count the
 * delay model as information about the amplitude.
 */
export function jointTimingStep(
  f: LinearFit, prior_offset_s: number, prior_u_s: number, d: TimingDelays, timing: ComparatorTiming,
  /** Delays the fit could not take out (fitRing's fallback): Type B of their whole size. */
  unapplied: TimingDelays | null = null,
): JointTiming | null {
  const n = f.w.length;
  const np = prior_u_s > 0 ? 5 : 4;
  const N = new Float64Array(np * np);
  const g = new Float64Array(np);
  const row = new Float64Array(np);
  for (let k = 0; k < n; k++) {
    const w = f.w[k];
    if (!(w > 0)) continue;
    for (let i = 0; i < 4; i++) row[i] = f.jac[4 * k + i];
    if (np === 5) row[4] = f.rising[k] === 1 ? -f.slope[k] : 0;
    for (let i = 0; i < np; i++) {
      g[i] += w * row[i] * f.r[k];
      for (let j = 0; j < np; j++) N[np * i + j] += w * row[i] * row[j];
    }
  }
  if (np === 5 && Number.isFinite(prior_u_s)) {
    N[24] += 1 / (prior_u_s * prior_u_s);
    g[4] -= prior_offset_s / (prior_u_s * prior_u_s);
  }
  // The fit has converged in the ring parameters under its own (robust) weights: their gradient
  // here, under plain weights, is not a step to take. Only the skew moves them.
  for (let i = 0; i < 4; i++) g[i] = 0;
  const Ninv = invertSymmetric(np, N);
  const plain = invertSymmetric(4, normal(f));
  if (!Ninv || !plain) return null;
  const step = new Float64Array(np);
  for (let i = 0; i < np; i++) for (let j = 0; j < np; j++) step[i] -= Ninv[np * i + j] * g[j];
  const added = new Float64Array(16);
  for (let i = 0; i < 4; i++) for (let j = 0; j < 4; j++) added[4 * i + j] = Ninv[np * i + j] - plain[4 * i + j];
  const addTypeB = (col: (k: number) => number, u: number) => {
    if (!(u > 0)) return;
    const b = new Float64Array(np);
    for (let k = 0; k < n; k++) {
      const w = f.w[k];
      if (!(w > 0)) continue;
      const v = col(k);
      if (v === 0) continue;
      for (let i = 0; i < 4; i++) b[i] += w * f.jac[4 * k + i] * v;
      if (np === 5 && f.rising[k] === 1) b[4] -= w * f.slope[k] * v;
    }
    const sens = new Float64Array(4);
    for (let i = 0; i < 4; i++) for (let j = 0; j < np; j++) sens[i] += Ninv[np * i + j] * b[j];
    for (let i = 0; i < 4; i++) for (let j = 0; j < 4; j++) added[4 * i + j] += sens[i] * sens[j] * u * u;
  };
  // A delay d_k moves residual k by -slope_k d_k.
  addTypeB((k) => -f.slope[k] * d.fp_s[k], d.noise_read ? FIRST_PASSAGE_U_REL_READ : FIRST_PASSAGE_U_REL);
  const q = timing.overdrive_v_s ?? 0;
  if (q > 0) addTypeB((k) => (-f.slope[k] * d.od_s[k]) / (2 * q), timing.overdrive_u_v_s ?? 0.5 * q);
  if (unapplied) addTypeB((k) => -f.slope[k] * (unapplied.fp_s[k] + unapplied.od_s[k] - d.fp_s[k] - d.od_s[k]), 1);
  return {
    dp: step.slice(0, 4), dskew_s: np === 5 ? step[4] : 0, added_cov: added,
    skew_sd_s: np === 5 ? Math.sqrt(Ninv[24]) : 0, base_alpha_var: plain[5 * P_ALPHA],
  };
}

/**
 * The covariance the correction loop's own estimator has (fitRing: the fit at corrected times
 * solves J^T W r = 0, with the delays d(p) taken from the model but not differentiated), less the
 * plain fit's (J^T W J)^-1: to first order p - p_true = -A^-1 J^T W e with
 * A = J^T W (J - slope * dd/dp), so its covariance is A^-1 (J^T W J) A^-T (a sandwich: P. J. Huber,
 * "The behavior of maximum likelihood estimates under nonstandard conditions", Proc. Fifth Berkeley
 * Symp. 1, 1967, from memory). Where the delays follow the weakly determined amplitude steeply
 * (slow tail edges) this is larger than the plain covariance. `ddp`: n x 4 derivatives of the
 * delays. Null when A is singular.
 */
export function correctionCovariance(f: LinearFit, ddp: Float64Array): Float64Array | null {
  const N = normal(f);
  const A = new Float64Array(16);
  const n = f.w.length;
  for (let k = 0; k < n; k++) {
    const w = f.w[k];
    if (!(w > 0)) continue;
    for (let i = 0; i < 4; i++) {
      const ji = f.jac[4 * k + i];
      for (let j = 0; j < 4; j++) A[4 * i + j] += w * ji * (f.jac[4 * k + j] - f.slope[k] * ddp[4 * k + j]);
    }
  }
  const Ainv = invert4(A);
  const plain = invertSymmetric(4, N);
  if (!Ainv || !plain) return null;
  // Ainv N Ainv^T - N^-1
  const t = new Float64Array(16);
  for (let i = 0; i < 4; i++) for (let j = 0; j < 4; j++) for (let k = 0; k < 4; k++) t[4 * i + j] += Ainv[4 * i + k] * N[4 * k + j];
  const out = new Float64Array(16);
  for (let i = 0; i < 4; i++) for (let j = 0; j < 4; j++) {
    let v = 0;
    for (let k = 0; k < 4; k++) v += t[4 * i + k] * Ainv[4 * j + k];
    out[4 * i + j] = v - plain[4 * i + j];
  }
  return out;
}

/** Inverse of a general 4 x 4 matrix (Gauss-Jordan with partial pivoting), or null. */
function invert4(m: Float64Array): Float64Array | null {
  const a = Float64Array.from(m);
  const inv = new Float64Array(16);
  for (let i = 0; i < 4; i++) inv[5 * i] = 1;
  for (let c = 0; c < 4; c++) {
    let piv = c;
    for (let r = c + 1; r < 4; r++) if (Math.abs(a[4 * r + c]) > Math.abs(a[4 * piv + c])) piv = r;
    if (!(Math.abs(a[4 * piv + c]) > 0)) return null;
    if (piv !== c) {
      for (let j = 0; j < 4; j++) {
        [a[4 * c + j], a[4 * piv + j]] = [a[4 * piv + j], a[4 * c + j]];
        [inv[4 * c + j], inv[4 * piv + j]] = [inv[4 * piv + j], inv[4 * c + j]];
      }
    }
    const d = a[4 * c + c];
    for (let j = 0; j < 4; j++) {
      a[4 * c + j] /= d;
      inv[4 * c + j] /= d;
    }
    for (let r = 0; r < 4; r++) {
      if (r === c) continue;
      const f = a[4 * r + c];
      if (f === 0) continue;
      for (let j = 0; j < 4; j++) {
        a[4 * r + j] -= f * a[4 * c + j];
        inv[4 * r + j] -= f * inv[4 * c + j];
      }
    }
  }
  return inv;
}
