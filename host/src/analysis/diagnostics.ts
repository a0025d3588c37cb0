// Warnings about a fitted ring: each has a stable code and says what to do next. Thresholds
// marked "bench practice" are engineering choices, not from a standard.

import type { FitState } from "./analyze-ring.ts";
import { P_ALPHA, P_LNA, P_PHI, P_WD } from "./edge-model.ts";
import type { RingQuantities } from "./ring-quantities.ts";
import { residualCorrelation } from "./residual-correlation.ts";
import type { Warning } from "./types.ts";

/** Fewer whole cycles than this: L and especially Q rest on little data (bench practice). */
const MIN_CYCLES = 5;
/** Ring still this many times the stopping threshold at the last edge: truncated. */
const TRUNCATED_RATIO = 1.5;
/** Initial amplitude below this multiple of the threshold: delays asin(V/A) dominate. */
const NEAR_AMPLITUDE_RATIO = 3;
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
    warnings.push({ code: "TOO_FEW_CYCLES", message: `only ${cycles.toFixed(1)} cycles were fitted: raise the drive current, lower the thresholds or use a larger tank capacitance so the ring lasts longer` });
  }
  if (aLast > TRUNCATED_RATIO * vStop) {
    warnings.push({ code: "RING_TRUNCATED", message: `the ring was still ${(aLast / vStop).toFixed(1)}x the threshold when the capture ended: lengthen the capture window or allow more edges, or Q will be poorly determined` });
  }
  if (a0 < NEAR_AMPLITUDE_RATIO * vStop) {
    warnings.push({ code: "THRESHOLDS_NEAR_AMPLITUDE", message: `the ring starts at only ${(a0 / vStop).toFixed(2)}x the comparator threshold: raise the drive current or lower the thresholds` });
  }
  const rejected = e.n - nUsed;
  if (rejected > 0.1 * e.n) {
    warnings.push({ code: "MANY_REJECTED", message: `${rejected} of ${e.n} edges were rejected: check the probe wiring and grounding, and the comparator hysteresis, then measure again` });
  }
  const missing = mMax - mMin + 1 - nUsed;
  if (missing > Math.max(1, 0.01 * nUsed)) {
    warnings.push({ code: "MISSING_EDGES", message: `${missing} half-cycles have no usable edge: the capture is losing edges (dead time or buffer); lower the tick rate load or shorten the ring` });
  }
  const clip = firstCycleDeviation(s);
  if (clip > 4) {
    warnings.push({ code: "SUSPECTED_CLIPPING", message: `the first cycle's edges sit ${clip.toFixed(1)} sd off the ring model: the front end may clip or the switch transient may leak in; lower the drive current` });
  }
  const white = residualCorrelation(s.r, s.variance, s.used, s.edges.rising);
  if (white.z > 4 && white.rho > 0.2) {
    warnings.push({ code: "POOR_FIT", message: `residuals are correlated from edge to edge (lag-1 r = ${white.rho.toFixed(2)}): the ring is not a clean damped sine (interference, a second resonance, or a tick rate locked to the ring); the uncertainty has been widened for it` });
  }
  const drift = frequencyDrift(s);
  if (drift && Math.abs(drift.df_rel) > 4 * drift.df_rel_u && Math.abs(drift.df_rel) > DRIFT_MIN_REL) {
    warnings.push({ code: "FREQUENCY_DRIFT", message: `the ring frequency changes by ${(drift.df_rel * 1e6).toFixed(0)} ppm (± ${(2 * drift.df_rel_u * 1e6).toFixed(0)} ppm, k = 2) from the strong to the weak half: the tank capacitor may be voltage dependent (use C0G/film) or the core may be near saturation (lower the drive current)` });
  }
  if (rq.u.q > 0.1 * rq.q) {
    warnings.push({ code: "Q_UNCERTAIN", message: `Q is determined only to ±${((200 * rq.u.q) / rq.q).toFixed(0)} % (k = 2): use offset thresholds, a longer capture or a higher drive current` });
  }
  return { warnings, drift };
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
 * wd fitted separately to the strong and the weak half of the used edges, with the fitted
 * amplitude and decay held: each half is then a weighted straight line in phase.
 */
function frequencyDrift(s: FitState): { df_rel: number; df_rel_u: number } | undefined {
  const { edges: e, used, p } = s;
  const { vh_v, vl_v } = s.checked;
  let nUsed = 0;
  for (let k = 0; k < e.n; k++) if (used[k] > 0) nUsed++;
  if (nUsed < 16) return undefined;
  const halves = [line(), line()];
  let seen = 0;
  const invA0 = Math.exp(-p[P_LNA]);
  for (let k = 0; k < e.n; k++) {
    if (!(used[k] > 0)) continue;
    const h = halves[seen++ < nUsed / 2 ? 0 : 1];
    const rise = e.rising[k] === 1;
    const sgn = rise ? 1 : -1;
    const u = (rise ? vh_v : vl_v) * invA0 * Math.exp(p[P_ALPHA] * e.t_s[k]);
    if (!(Math.abs(u) < 0.99)) continue; // grazing the threshold: no usable phase
    const sq = Math.sqrt(1 - u * u);
    const gt = p[P_WD] - (p[P_ALPHA] * sgn * u) / sq;
    if (!(gt > 0.1 * p[P_WD])) continue;
    const y = e.m[k] * Math.PI + p[P_PHI] + sgn * Math.asin(u);
    // Phase variance: the edge's time variance (volts variance over slope^2) times g_t^2.
    const wk = (s.slope[k] * s.slope[k]) / (s.variance[k] * gt * gt);
    const t = e.t_s[k];
    h.s0 += wk; h.st += wk * t; h.stt += wk * t * t; h.sy += wk * y; h.sty += wk * t * y;
  }
  const wd = p[P_WD];
  const fits = halves.map((h) => {
    const det = h.s0 * h.stt - h.st * h.st;
    return { wd: (h.s0 * h.sty - h.st * h.sy) / det, var: h.s0 / det };
  });
  if (!(fits[0].var > 0 && fits[1].var > 0)) return undefined;
  const df = (fits[1].wd - fits[0].wd) / wd;
  const u = Math.sqrt(fits[0].var + fits[1].var) / wd;
  return Number.isFinite(df) && Number.isFinite(u) ? { df_rel: df, df_rel_u: u } : undefined;
}

function line() {
  return { s0: 0, st: 0, stt: 0, sy: 0, sty: 0 };
}
