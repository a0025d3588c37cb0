// Warnings about a fitted ring: each has a stable code and says what to do next. Thresholds
// marked "bench practice" are engineering choices, not from a standard.

import type { FitState } from "./analyze-ring.ts";
import { P_ALPHA, P_LNA, P_WD } from "./edge-model.ts";
import { invertSymmetric, quadraticForm } from "./small-linear-algebra.ts";
import type { RingQuantities } from "./ring-quantities.ts";
import { residualCorrelation } from "./residual-correlation.ts";
import type { Warning } from "./types.ts";

/**
 * Fewer whole cycles than this: L and especially Q rest on little data, and the fit's
 * linearised uncertainty understates their spread (in the benchmark the k = 2 interval covered
 * 76 % of the L errors at 6.5 cycles, 88 % at 10.5, 93-99 % from 14 up: bench practice).
 */
const MIN_CYCLES = 8;
/** Ring still this many times the stopping threshold at the last edge: truncated. */
const TRUNCATED_RATIO = 1.5;
/** Initial amplitude below this multiple of the threshold: delays asin(V/A) dominate. */
const NEAR_AMPLITUDE_RATIO = 3;
/** A skew the capture shows beyond this many standard deviations from the one assumed (bench
 *  practice: a false alarm rate of about 6e-5 for Gaussian errors). */
const SKEW_Z = 4;
/** Frequency drift flagged above 4 standard uncertainties and 20 ppm (bench practice). */
const DRIFT_MIN_REL = 20e-6;

export interface Diagnosis {
  warnings: Warning[];
  drift?: { df_rel: number; df_rel_u: number };
}

export function diagnose(s: FitState, rq: RingQuantities): Diagnosis {
  const warnings: Warning[] = [];
  const { edges: e, used, p } = s;
  const { vh_v, vl_v } = s.checked;
  const vStop = Math.max(vh_v, -vl_v);
  let mMin = Infinity, mMax = -Infinity, nUsed = 0, tLast = 0;
  for (let k = 0; k < e.n; k++) {
    if (!(used[k] > 0)) continue;
    nUsed++;
    mMin = Math.min(mMin, e.m[k]);
    mMax = Math.max(mMax, e.m[k]);
    tLast = Math.max(tLast, e.t_s[k]);
  }
  const cycles = (mMax - mMin) / 2;
  const a0 = Math.exp(p[P_LNA]);
  const aLast = a0 * Math.exp(-p[P_ALPHA] * tLast);

  if (cycles < MIN_CYCLES) {
    warnings.push({ code: "TOO_FEW_CYCLES", message: `only ${cycles.toFixed(1)} cycles were fitted, and with so few L and Q can be off by more than their stated uncertainty: raise the drive current, lower the thresholds or use a larger tank capacitance so the ring lasts longer` });
  }
  if (aLast > TRUNCATED_RATIO * vStop) {
    warnings.push({ code: "RING_TRUNCATED", message: `the ring was still ${(aLast / vStop).toFixed(1)}x the threshold when the capture ended: lengthen the capture window or allow more edges, or Q will be poorly determined` });
  }
  // Judged only when the fit knows the amplitude (to about ±50 %): with symmetric thresholds and
  // few edges it may not, and Q_UNCERTAIN says so.
  if (a0 < NEAR_AMPLITUDE_RATIO * vStop && Math.sqrt(s.cov[10]) < 0.5) {
    warnings.push({ code: "THRESHOLDS_NEAR_AMPLITUDE", message: `the ring starts at only ${(a0 / vStop).toFixed(2)}x the comparator threshold: raise the drive current or lower the thresholds` });
  }
  const rejected = e.n - nUsed;
  if (rejected > 0.1 * e.n) {
    warnings.push({ code: "MANY_REJECTED", message: `${rejected} of ${e.n} edges were rejected: check the probe wiring and grounding, and the comparator hysteresis, then measure again` });
  }
  const missing = mMax - mMin + 1 - nUsed;
  if (missing > Math.max(1, 0.01 * nUsed)) {
    warnings.push({ code: "MISSING_EDGES", message: `${missing} half-cycles have no usable edge: the capture is losing edges (capture dead time or buffer overrun); use a larger tank capacitance to slow the ring, or check the capture settings` });
  }
  const clip = firstCycleDeviation(s);
  if (clip > 5 && settlesAfterStart(s)) {
    warnings.push({ code: "SUSPECTED_CLIPPING", message: `the first cycle's edges sit ${clip.toFixed(1)} sd off the ring model: the front end may clip or the switch transient may leak in; lower the drive current` });
  }
  const white = residualCorrelation(s.r, s.variance, s.used, s.edges.rising);
  if (white.z > 4 && white.rho > 0.2) {
    warnings.push({ code: "POOR_FIT", message: `residuals are correlated from edge to edge (lag-1 r = ${white.rho.toFixed(2)}): the ring is not a clean damped sine (interference, a second resonance, or a tick rate locked to the ring); the uncertainty has been widened for it` });
  }
  const skew = skewEvidence(s);
  if (skew) warnings.push(skew);
  if (s.ringEnd) warnings.push(ringEndWarning(s));
  const drift = frequencyDrift(s);
  if (drift && Math.abs(drift.df_rel) > 4 * drift.df_rel_u && Math.abs(drift.df_rel) > DRIFT_MIN_REL) {
    warnings.push({ code: "FREQUENCY_DRIFT", message: `the ring frequency changes by ${(drift.df_rel * 1e6).toFixed(0)} ppm (± ${(2 * drift.df_rel_u * 1e6).toFixed(0)} ppm, k = 2) from the start to the end of the ring: the tank capacitor may be voltage dependent (use C0G/film) or the core may be near saturation (lower the drive current)` });
  }
  if (rq.u.q > 0.1 * rq.q) {
    warnings.push({ code: "Q_UNCERTAIN", message: `Q is determined only to ±${((200 * rq.u.q) / rq.q).toFixed(0)} % (k = 2): use offset thresholds, a longer capture or a higher drive current` });
  }
  return { warnings, drift };
}

/**
 * A clamp acts only while the ring is above its voltage: it flattens the first peak or two, and
 * from then on the ring is a free linear ring again, whose edges fit the model. A part whose L
 * (or a tank whose C) depends on the amplitude bends the edges smoothly instead, cycle after
 * cycle, and its first edges sit off the model for the same reason as the next dozen: that is
 * frequency drift, not clipping. Clipping is suspected only when the edges after the first two
 * cycles (the next twelve edges) are back on the model: median |z| below CLIP_SETTLED_Z.
 */
const CLIP_SETTLED_Z = 3;
function settlesAfterStart(s: FitState): boolean {
  const z: number[] = [];
  let seen = 0;
  for (let k = 0; k < s.edges.n && z.length < 12; k++) {
    const rk = s.r[k];
    if (rk !== rk) continue;
    if (++seen > 4) z.push(Math.abs(rk) / Math.sqrt(s.variance[k]) / s.z_scale);
  }
  if (z.length === 0) return true;
  z.sort((a, b) => a - b);
  return z[z.length >> 1] < CLIP_SETTLED_Z;
}

/** Largest |z| (robust sd) among the first two fitted or rejected edges of the ring. */
function firstCycleDeviation(s: FitState): number {
  let worst = 0;
  let seen = 0;
  for (let k = 0; k < s.edges.n && seen < 2; k++) {
    const rk = s.r[k];
    if (rk !== rk) continue;
    seen++;
    worst = Math.max(worst, Math.abs(rk) / Math.sqrt(s.variance[k]) / s.z_scale);
  }
  return worst;
}

/**
 * Frequency drift with amplitude, tested inside the full model: the ring's phase gains a term
 * wd beta (1 - e^(-alpha t)) / alpha, i.e. the frequency is wd (1 + beta A(t)/A0). beta is
 * estimated by one Gauss-Newton step of the five-parameter model from the fitted point, and its
 * variance from the five-parameter normal matrix, so that its correlation
 * with amplitude and decay (which also bend the edge times) is accounted for (a score test,
 * C. R. Rao, Proc. Camb. Phil. Soc. 44, 1948). Reported as the relative change of frequency from
 * the first to the last fitted edge.
 */
function frequencyDrift(s: FitState): { df_rel: number; df_rel_u: number } | undefined {
  const { edges: e, used, p } = s;
  const n = e.n;
  let nUsed = 0, tFirst = Infinity, tLast = 0;
  for (let k = 0; k < n; k++) {
    if (!(used[k] > 0)) continue;
    nUsed++;
    tFirst = Math.min(tFirst, e.t_s[k]);
    tLast = Math.max(tLast, e.t_s[k]);
  }
  if (nUsed < 16) return undefined;
  const jac = s.jac;
  const wd = p[P_WD];
  const alpha = p[P_ALPHA];
  const r = s.r;
  const variance = s.variance;
  const ts = e.t_s;
  let h00 = 0, h01 = 0, h02 = 0, h03 = 0, h11 = 0, h12 = 0, h13 = 0, h22 = 0, h23 = 0, h33 = 0;
  let b0 = 0, b1 = 0, b2 = 0, b3 = 0, g0 = 0, g1 = 0, g2 = 0, g3 = 0;
  let c = 0, g = 0, chi2 = 0;
  for (let k = 0; k < n; k++) {
    if (!(used[k] > 0)) continue;
    const w = 1 / variance[k];
    const t = ts[k];
    const o = 4 * k;
    const j0 = jac[o], j1 = jac[o + 1], j2 = jac[o + 2], j3 = jac[o + 3];
    const rk = r[k];
    // d r / d beta = (d r / d wd) wd (1 - e^(-alpha t)) / (alpha t)
    const jb = (j0 * wd * -Math.expm1(-alpha * t)) / (alpha * t);
    const a0 = w * j0, a1 = w * j1, a2 = w * j2, a3 = w * j3;
    b0 += a0 * jb; b1 += a1 * jb; b2 += a2 * jb; b3 += a3 * jb;
    g0 += a0 * rk; g1 += a1 * rk; g2 += a2 * rk; g3 += a3 * rk;
    h00 += a0 * j0; h01 += a0 * j1; h02 += a0 * j2; h03 += a0 * j3;
    h11 += a1 * j1; h12 += a1 * j2; h13 += a1 * j3;
    h22 += a2 * j2; h23 += a2 * j3; h33 += a3 * j3;
    c += w * jb * jb;
    g += w * jb * rk;
    chi2 += w * rk * rk;
  }
  const h = Float64Array.of(h00, h01, h02, h03, h01, h11, h12, h13, h02, h12, h22, h23, h03, h13, h23, h33);
  const b = Float64Array.of(b0, b1, b2, b3);
  const gt = Float64Array.of(g0, g1, g2, g3);
  const hi = invertSymmetric(4, h);
  if (!hi) return undefined;
  const schur = c - quadraticForm(4, hi, b);
  if (!(schur > 0)) return undefined;
  const inflate = Math.max(1, chi2 / (nUsed - 5));
  // The four-parameter gradient is zero at an unconstrained optimum; kept for a fit held by a
  // soft limit.
  let bhg = 0;
  for (let i = 0; i < 4; i++) for (let j = 0; j < 4; j++) bhg += b[i] * hi[4 * i + j] * gt[j];
  const beta = -(g - bhg) / schur;
  const betaU = Math.sqrt(inflate / schur);
  const span = Math.exp(-alpha * tLast) - Math.exp(-alpha * tFirst);
  const df = beta * span;
  const u = Math.abs(betaU * span);
  return Number.isFinite(df) && Number.isFinite(u) ? { df_rel: df, df_rel_u: u } : undefined;
}

/**
 * COMPARATOR_SKEW: rising and falling edges sit apart by a constant time that the fit did not
 * assume: a score test on a rise/fall delay difference (one Gauss-Newton step with the ring's
 * four parameters profiled out, analyze-ring.ts). Uncorrected fits are tested against zero skew;
 * corrected ones against their prior (calibration or the board's), combined with the capture's
 * own uncertainty.
 */
function skewEvidence(s: FitState): Warning | null {
  const t = s.timing;
  if (!t || !(t.capture_skew_sd_s > 0) || !Number.isFinite(t.capture_skew_step_s)) return null;
  const captureSkew = t.skew_s + t.capture_skew_step_s;
  const prior = t.corrected ? t.prior_skew_s ?? 0 : 0;
  const priorU = t.corrected ? t.prior_skew_u_s ?? 0 : 0;
  if (!Number.isFinite(priorU)) return null;
  const z = (captureSkew - prior) / Math.sqrt(t.capture_skew_sd_s ** 2 + priorU ** 2);
  if (!(Math.abs(z) > SKEW_Z)) return null;
  const ns = (x: number) => (x * 1e9).toFixed(1);
  const what = `rising edges come ${ns(captureSkew)} ns (± ${ns(2 * t.capture_skew_sd_s)} ns, k = 2) later than falling ones by the capture's own evidence`;
  const next = t.corrected
    ? `the comparator skew from ${t.skew_source} (${ns(prior)} ns ± ${ns(2 * priorU)} ns) disagrees with it: calibrate the skew again (docs/calibration.md) and measure with the new profile`
    : "L and Q were fitted with equal rise and fall delays and their uncertainties leave this out: calibrate the comparator's skew (docs/calibration.md) and measure with it";
  return { code: "COMPARATOR_SKEW", message: `${what}; ${next}` };
}

/**
 * THRESHOLD_IN_NOISE: the capture stopped following the ring (ring-end.ts) and the fit used the
 * edges before that point only. The gap between the thresholds (the hysteresis) is what the noise
 * has to bridge to fire an edge of its own.
 */
function ringEndWarning(s: FitState): Warning {
  const e = s.ringEnd!;
  const { vh_v, vl_v } = s.checked;
  const mv = (x: number) => (x * 1e3).toFixed(1);
  const gap = `${mv(vh_v - vl_v)} mV between the thresholds (${mv(vh_v)} / ${mv(vl_v)} mV)`;
  const sigma = Math.sqrt(s.noise.sigma_v2);
  const noise = sigma > 0 ? ` against about ${mv(sigma)} mV rms of noise seen on the edges` : "";
  return {
    code: "THRESHOLD_IN_NOISE",
    message: `from edge ${e.end} of ${e.edges} (${(e.t_s * 1e3).toPrecision(3)} ms) on, the edges follow the comparator's noise, not the ring (${(100 * e.rate_after).toFixed(0)} % of the intervals are too short for a ring): only the ${e.end} edges before were used; ${gap}${noise} are too close: move the thresholds apart and away from zero, shorten or shield the leads, or raise the drive current`,
  };
}
