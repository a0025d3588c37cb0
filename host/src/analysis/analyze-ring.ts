// analyzeRing: comparator edges in, f0, L, Q, ESR and their uncertainties out.
// Pipeline: check input -> first-pass half-cycle indices (cycle-bookkeeping) -> global start
// candidates (initial-guess), ranked by short fits (fit-start) -> from the best start (and the
// runner-up when the ranking is close) rounds of { weighted LM fit, re-index edges from the
// model, estimate the two noise components, reject gross outliers and Huber-weight the rest }
// until nothing changes -> the likelier fit, U widened if the other is nearly as likely ->
// covariance -> derived quantities (ring-quantities) -> diagnostics.

import { assignHalfCycles } from "./cycle-bookkeeping.ts";
import { diagnose } from "./diagnostics.ts";
import { captureWorkspace, fitEdgeModel, type EdgeFitResult, type FitLimits, type FitWorkspace } from "./edge-fit.ts";
import { chooseResidualForms, evaluateEdges, evaluateUnindexed, formChanges, makeEdgeSet, P_ALPHA, P_LNA, P_PHI, P_WD, type EdgeSet } from "./edge-model.ts";
import { fitLimits, initialVariance, rankingSubset, rankStarts, type RankedStart } from "./fit-start.ts";
import { initialCandidates, type InitialGuess } from "./initial-guess.ts";
import { indicesHold, reassignHalfCycles, type IndexMargin } from "./model-bookkeeping.ts";
import { estimateNoise, negLogLikelihood, REJECT_Z, updateVariances, type NoiseEstimate } from "./noise-model.ts";
import { ringQuantities, COVERAGE_K, type RingQuantities } from "./ring-quantities.ts";
import { correlationInflation, residualCorrelation } from "./residual-correlation.ts";
import { huberWeight, madSigma, median } from "./robust-stats.ts";
import { invertSymmetric } from "./small-linear-algebra.ts";
import { checkInput, MIN_EDGES, type CheckedInput } from "./validate-input.ts";
import { offsetThresholds, ringExtent, tailEnd, tailSelects } from "./ring-end.ts";
import { decayProfile, type ProfilePoint } from "./decay-profile.ts";
import { correctionCovariance, delayEffectSd, edgeDelays, jointTimingStep, rampReach, ringSlopeAt, skewStep, type ComparatorTiming, type LinearFit, type TimingDelays } from "./comparator-timing.ts";
import { AnalysisError, type RingAnalysis, type RingInput, type Warning } from "./types.ts";

/** Why the edges after the ring's part of a capture were set aside (ring-end.ts). */
export const REASON_AFTER_RING = "after the ring's end: fired by noise (chatter or noise crossing both thresholds)";

/** ... and of the edges after the ring's envelope had decayed into the noise (ring-end.ts). */
export const REASON_NOISE_TAIL = "after the ring's envelope came within a few noise sd of the threshold: decided by noise";

/** Huber tuning constant in robust standard deviations. */
const HUBER_C = 2;
const MAX_ROUNDS = 8;
/**
 * A fit stops when a step gains less than this in chi2 (units of the noise model), or when its
 * quadratic model, trusted, leaves less than this to gain (edge-fit.ts): the parameters
 * are then within about 0.03 standard deviations of the minimum, which adds 0.1 % to their
 * variance. Tighter only spends iterations along flat directions.
 */
const FIT_TOL_CHI2 = 1e-3;

/** Everything the fit leaves behind, for diagnostics. */
export interface FitState {
  checked: CheckedInput;
  edges: EdgeSet;
  p: Float64Array;
  /** Covariance of p (4 x 4). */
  cov: Float64Array;
  /** Residual per edge at p, volts (edge-model.ts); NaN for an edge without a half-cycle index. */
  r: Float64Array;
  /** d r / d p at p, row-major n x 4 (a zero row for an edge without an index). */
  jac: Float64Array;
  slope: Float64Array;
  variance: Float64Array;
  /** 1 where the edge took part in the final fit. */
  used: Float64Array;
  /** Robust standard deviation of the standardised residuals. */
  z_scale: number;
  noise: NoiseEstimate;
  /** Why each edge with used[k] = 0 was set aside (entries of used edges mean nothing). */
  reasons: (string | null)[];
  chi2: number;
  /** Robust -2 ln likelihood (negLogLikelihood), for comparing fits from different starts. */
  nll: number;
  /** A fit from another start that the edges support almost as well (AMBIGUOUS_NLL). */
  alternative?: FitState;
  /** What the comparator-timing terms did (fitRing). */
  timing?: TimingState;
  /** Standard deviation of the skew from the joint timing step (fitRing). */
  timingSkewSd?: number;
  /** Where the capture stopped following the ring (fitRing, ring-end.ts): edges from `end` on
   *  were left out of everything above. */
  ringEnd?: RingEnd;
  /** Edges from this index on came after the ring's envelope had decayed into the noise at the
   *  farther threshold (fitRing, ring-end.ts tailEnd) and were left out too. */
  tailEnd?: number;
  /** The fits across the skew's prior and their weights (marginalizeSkew), when the capture hardly
   *  determines the skew. */
  skewMixture?: { wd: number; alpha: number; w: number }[];
  /** The likelihood profiled along the decay (decay-profile.ts), when no skew mixture is. */
  decayProfile?: ProfilePoint[];
  /** Edges in the capture (fitRing): `edges` holds the first tailEnd or ringEnd.end of them. */
  captured?: number;
}

/** The capture's edges from `end` (of `edges`) on fired on noise, from time t_s (ring-end.ts). */
export interface RingEnd {
  end: number;
  edges: number;
  t_s: number;
  /** Fraction of too-short intervals before `end` and from it on. */
  rate_before: number;
  rate_after: number;
}

/** The comparator-timing terms of a fit (comparator-timing.ts). */
export interface TimingState {
  /** True when the edge times were corrected (the caller gave RingInput.comparator). */
  corrected: boolean;
  /** Skew the fit assumes (estimate), seconds, and its standard deviation after capture and prior. */
  skew_s: number;
  skew_sd_s: number;
  /** The capture's own evidence: a further Gauss-Newton step in skew without the prior, and its sd. */
  capture_skew_step_s: number;
  capture_skew_sd_s: number;
  skew_source: string;
  prior_skew_s?: number;
  prior_skew_u_s?: number;
  /** Largest first-passage shift (magnitude) and overdrive delay among the used edges, seconds. */
  fp_max_s: number;
  od_max_s: number;
  /** The delays taken out of each edge's time (first passage, overdrive), seconds. */
  delays?: TimingDelays;
}

export function analyzeRing(input: RingInput): RingAnalysis {
  return analyzeFit(fitRing(input));
}

/** The result of a fit (fitRing): quantities, uncertainties, rejected edges and warnings. */
export function analyzeFit(s: FitState): RingAnalysis {
  const rq = quantitiesOf(s);
  const rejected: { index: number; reason: string }[] = [];
  for (let k = 0; k < s.edges.n; k++) {
    if (s.used[k] > 0) continue;
    rejected.push({ index: k, reason: s.reasons[k] ?? "rejected" });
  }
  const total = s.captured ?? s.edges.n;
  for (let k = s.edges.n; k < total; k++) {
    rejected.push({ index: k, reason: s.ringEnd && k >= s.ringEnd.end ? REASON_AFTER_RING : REASON_NOISE_TAIL });
  }
  const used = total - rejected.length;
  const U = {
    l: COVERAGE_K * rq.u.inductance_h, q: COVERAGE_K * rq.u.q, esr: COVERAGE_K * rq.u.esr_ohm, f0: COVERAGE_K * rq.u.f0_hz,
  };
  let ambiguous: Warning | null = null;
  if (s.alternative) {
    // Two basins the edges cannot tell apart: each interval is widened to cover the other
    // fit's interval too, and a warning says so.
    const ra = quantitiesOf(s.alternative);
    const cover = (x: number, u: number, y: number, v: number) => Math.max(u, Math.abs(x - y) + v);
    U.l = cover(rq.inductance_h, U.l, ra.inductance_h, COVERAGE_K * ra.u.inductance_h);
    U.q = cover(rq.q, U.q, ra.q, COVERAGE_K * ra.u.q);
    U.esr = cover(rq.esr_ohm, U.esr, ra.esr_ohm, COVERAGE_K * ra.u.esr_ohm);
    U.f0 = cover(rq.f0_hz, U.f0, ra.f0_hz, COVERAGE_K * ra.u.f0_hz);
    const dl = Math.abs(ra.inductance_h / rq.inductance_h - 1);
    if (dl > 0.5 * (COVERAGE_K * rq.u.inductance_h) / rq.inductance_h || Math.abs(ra.q - rq.q) > 0.5 * COVERAGE_K * rq.u.q) {
      ambiguous = {
        code: "AMBIGUOUS_DECAY",
        message: `the edges fit two different decays almost equally well (Q ${fmt(rq.q)} or ${fmt(ra.q)}, L ${(dl * 1e6).toFixed(0)} ppm apart): the uncertainties cover both; use offset thresholds, a higher drive current or a longer ring to tell them apart`,
      };
    }
  }
  // The warnings judge the uncertainties as reported (widened when ambiguous).
  const reported: RingQuantities = {
    ...rq, u: { inductance_h: U.l / COVERAGE_K, q: U.q / COVERAGE_K, esr_ohm: U.esr / COVERAGE_K, f0_hz: U.f0 / COVERAGE_K },
  };
  const diagnosis = diagnose(s, reported);
  if (ambiguous) diagnosis.warnings.push(ambiguous);
  return {
    f0_hz: rq.f0_hz,
    fd_hz: rq.fd_hz,
    alpha_per_s: rq.alpha_per_s,
    inductance_h: rq.inductance_h,
    inductance_u_h: U.l,
    q: rq.q,
    q_u: U.q,
    esr_ohm: rq.esr_ohm,
    esr_u_ohm: U.esr,
    amplitude_v: Math.exp(s.p[P_LNA]),
    f0_u_hz: U.f0,
    edges_used: used,
    edges_rejected: rejected.length,
    rejected,
    warnings: diagnosis.warnings,
    budget: rq.budget,
    noise: { sigma_t_s: Math.sqrt(s.noise.sigma_t2), sigma_v_v: Math.sqrt(s.noise.sigma_v2) },
    ...(diagnosis.drift ? { drift: diagnosis.drift } : {}),
  };
}

/**
 * f0, L, Q, ESR and their uncertainties from a fit's (wd, alpha) and their covariance; with a
 * skew mixture (marginalizeSkew), each quantity's variance gains the weighted spread of its values
 * over the mixture's fits about the reported one, computed through the exact relations (L goes
 * with wd^2 + alpha^2, Q with 1/alpha: linearised at one alpha they miss what a poorly known decay
 * does to L).
 */
function quantitiesOf(s: FitState): RingQuantities {
  const c = s.checked;
  const rq = ringQuantities(s.p[P_WD], s.p[P_ALPHA], [s.cov[0], s.cov[3], s.cov[15]], c.c_f, c.c_u_f, c.timebase_u_rel);
  const mix = s.skewMixture ?? s.decayProfile;
  if (!mix) return rq;
  let vl = 0, vq = 0, ve = 0, vf = 0;
  for (const m of mix) {
    const w02 = m.wd * m.wd + m.alpha * m.alpha;
    const l = 1 / (w02 * c.c_f);
    const q = Math.sqrt(w02) / (2 * m.alpha);
    vl += m.w * (l - rq.inductance_h) ** 2;
    vq += m.w * (q - rq.q) ** 2;
    ve += m.w * (2 * m.alpha * l - rq.esr_ohm) ** 2;
    vf += m.w * (Math.sqrt(w02) / (2 * Math.PI) - rq.f0_hz) ** 2;
  }
  // A skew mixture's fits each had the skew fixed: their spread adds to the linearised variance.
  // The decay profile spans alpha itself: its spread adds to the variance at fixed alpha, and the
  // linearised variance stays where it is the larger.
  const base = s.skewMixture
    ? rq
    : ringQuantities(s.p[P_WD], s.p[P_ALPHA], [Math.max(0, s.cov[0] - (s.cov[3] * s.cov[3]) / s.cov[15]), 0, 0], c.c_f, c.c_u_f, c.timebase_u_rel);
  const total = (lin: number, at: number, v: number) => Math.max(s.skewMixture ? 0 : lin, Math.sqrt(at * at + v));
  const uL = total(rq.u.inductance_h, base.u.inductance_h, vl);
  return {
    ...rq,
    u: { inductance_h: uL, q: total(rq.u.q, base.u.q, vq), esr_ohm: total(rq.u.esr_ohm, base.u.esr_ohm, ve), f0_hz: total(rq.u.f0_hz, base.u.f0_hz, vf) },
    budget: rq.budget.map((b, i) => (i === 0 ? { ...b, rel_u: Math.sqrt(Math.max(0, b.rel_u ** 2 + (uL ** 2 - rq.u.inductance_h ** 2) / rq.inductance_h ** 2)) } : b)),
  };
}

/**
 * A runner-up start is fitted in full when its short fit ended within this factor of the best
 * start's chi2 and within RUNNER_UP_SUBSET_NLL of its subset likelihood: the short fits on a
 * subset cannot always tell two basins apart.
 */
const RUNNER_UP_CHI2_RATIO = 2;
/**
 * A runner-up whose short fit's robust -2 ln L on the subset (fit-start.ts) ends this much above
 * the best start's is not fitted in full: it could only matter within AMBIGUOUS_NLL of the first
 * fit. Twice that, on a third of the edges: on the benchmark's 500-edge captures the full fits of
 * two starts ending within 10 on the full likelihood were within 5 on the subset, and basins
 * 200-300 apart in full were 45 or more apart there (bench practice, calibrated there).
 */
const RUNNER_UP_SUBSET_NLL = 20;
/** Up to this many edges both starts are always fitted in full (cheap, and few edges leave the
 *  basins closest). */
const FEW_EDGES_BOTH_STARTS = 100;
/**
 * Two fits whose -2 ln likelihoods differ by less than this are both plausible: the result's
 * uncertainty is widened to cover both. A likelihood ratio of e^5 ~ 150, not the e^3 of a
 * one-parameter test: on short symmetric-threshold rings (12 edges, 4 + 2 parameters) the
 * true basin's fit ended 5-9 above a wrong one in the benchmark (bench practice, calibrated there).
 */
const AMBIGUOUS_NLL = 10;
/** A runner-up whose -2 ln L exceeds the first fit's by this much after a round is abandoned. */
const RUNNER_UP_GIVE_UP_NLL = 100;

/**
 * At most this many fits in the timing-correction loop (fitRing): the first at the assumed skew
 * alone, the next with the first-passage and overdrive delays at the fitted slopes and the skew
 * step; it stops once a further change of the corrections would move wd and alpha by less than
 * TIMING_SETTLED_SD of their standard deviations.
 */
const MAX_TIMING_FITS = 4;
const TIMING_SETTLED_SD = 0.05;
/**
 * First-passage and overdrive delays are applied up to this much ring phase (rad): the ramp
 * picture behind both is stretched beyond it (an edge that far from its ramp sits near the
 * ring's peak), and a runaway correction of a grazing edge stays bounded (bench practice: on the
 * realistic-comparator benchmark the uncapped ramp law corrected slow tail edges well, and only
 * its extrapolation to the slowest edges ran away).
 */
const MAX_DELAY_RAD = 0.5;
/** ... and this much when the corrections at MAX_DELAY_RAD cost the fit edges. */
const FALLBACK_DELAY_RAD = 0.1;

function applied(d: TimingDelays): boolean {
  for (let k = 0; k < d.fp_s.length; k++) if (d.fp_s[k] !== 0 || d.od_s[k] !== 0) return true;
  return false;
}

function countUsed(s: FitState): number {
  let u = 0;
  for (let k = 0; k < s.used.length; k++) u += s.used[k] > 0 ? 1 : 0;
  return u;
}

/** The fitting core of analyzeRing, exposed for diagnostics and tests. */
export function fitRing(input: RingInput): FitState {
  const part = ringPart(checkInput(input));
  const { c, tail } = noiseTail(part.c, input.comparator);
  const s = fitTimed(c, input.comparator);
  if (part.end) s.ringEnd = part.end;
  if (tail < part.c.t_s.length) s.tailEnd = tail;
  s.captured = part.end ? part.end.edges : part.c.t_s.length;
  for (const f of s.alternative ? [s, s.alternative] : [s]) {
    if (f.skewMixture) continue;
    const prof = decayProfile({ ...f, vh_v: c.vh_v, vl_v: c.vl_v });
    if (prof) f.decayProfile = prof;
  }
  return s;
}

/**
 * With continuous input noise (RingInput.comparator.noise_bw_hz), the edges past the point where
 * the ring's envelope comes within a few noise sigma of the farther threshold are decided by the
 * noise (ring-end.ts, tailEnd): from a first fit, they are left out and the capture is one cut
 * short. The noise is the larger of the caller's and the fit's (which reads first-passage
 * scatter, narrower than the noise).
 */
function noiseTail(c: CheckedInput, timing: ComparatorTiming | undefined): { c: CheckedInput; tail: number } {
  const n = c.t_s.length;
  const none = { c, tail: n };
  if (!timing || !(timing.noise_bw_hz! > 0)) return none;
  let first: FitState;
  try {
    first = fitCapture(c);
  } catch {
    return none;
  }
  const sigma = Math.max(timing.noise_v ?? 0, Math.sqrt(first.noise.sigma_v2));
  const vmax = Math.max(c.vh_v, -c.vl_v);
  if (!offsetThresholds(c.vh_v, c.vl_v) || !tailSelects(first.p[P_WD], vmax, sigma, timing.noise_bw_hz!)) return none;
  const tail = tailEnd(c.t_s, first.p[P_LNA], first.p[P_ALPHA], vmax, sigma);
  if (tail >= n || tail < MIN_EDGES) return none;
  return { c: { ...c, t_s: c.t_s.slice(0, tail), rising: c.rising.slice(0, tail), ring_ended: false }, tail };
}

/**
 * The part of a capture that follows its ring (ring-end.ts): edges from the first stretch that
 * noise fires on are left out, and the capture is then one cut short (not ended on quiet).
 * Refused when fewer than MIN_EDGES edges come before it.
 */
function ringPart(c: CheckedInput): { c: CheckedInput; end: RingEnd | null } {
  const x = ringExtent(c.t_s, c.rising);
  const n = c.t_s.length;
  if (x.end >= n) return { c, end: null };
  if (x.end < MIN_EDGES) {
    throw new AnalysisError("NO_RING", `the edges follow the comparator's noise almost from the start (${(100 * x.rate_after).toFixed(0)} % of the intervals are too short for a ring): the hysteresis between the thresholds is too narrow against the input noise; widen it (move the thresholds apart, away from zero), shorten or shield the leads, or raise the drive current`);
  }
  const end: RingEnd = { end: x.end, edges: n, t_s: c.t_s[x.end], rate_before: x.rate_before, rate_after: x.rate_after };
  return { c: { ...c, t_s: c.t_s.slice(0, x.end), rising: c.rising.slice(0, x.end), ring_ended: false }, end };
}

/** The fit of a capture's ring part, with the comparator's timing terms when they are given. */
function fitTimed(c: CheckedInput, timing: ComparatorTiming | undefined): FitState {
  if (!timing) {
    // Nothing known about the comparator's timing: the fit is of the thresholds' model alone,
    // and the capture's own evidence of a skew is kept for the COMPARATOR_SKEW diagnostic.
    const s = fitCapture(c);
    const st = skewStep(linearFitOf(s), 0, 0);
    s.timing = { corrected: false, skew_s: 0, skew_sd_s: 0, capture_skew_step_s: st.capture_step_s, capture_skew_sd_s: st.capture_sd_s, skew_source: "none", fp_max_s: 0, od_max_s: 0 };
    return s;
  }
  const n = c.t_s.length;
  const priorU = timing.skew_u_s >= 0 ? timing.skew_u_s : Infinity;
  const prior = Number.isFinite(timing.skew_s) ? timing.skew_s : 0;
  let skew = searchSkew(c, prior, priorU);
  let delays: TimingDelays = { fp_s: new Float64Array(n), od_s: new Float64Array(n) };
  let s!: FitState;
  let prev: FitState | null = null;
  let prevSkew = skew;
  let prevDelays = delays;
  let reach = MAX_DELAY_RAD;
  let unapplied: TimingDelays | null = null;
  const t = new Float64Array(n);
  const dd = new Float64Array(n);
  for (let pass = 0; pass < MAX_TIMING_FITS; pass++) {
    // The model's edge = the observed edge less the delays the model does not contain.
    for (let k = 0; k < n; k++) {
      t[k] = c.t_s[k] - (c.rising[k] === 1 ? skew : 0) - delays.fp_s[k] - delays.od_s[k];
      if (k > 0 && t[k] < t[k - 1]) t[k] = t[k - 1];
    }
    s = fitCapture({ ...c, t_s: t.slice() });
    if (pass > 0 && !(countUsed(s) >= countUsed(prev!) - Math.max(2, 0.01 * n))) {
      // The corrections cost the fit edges it had: they are not what these edges need (a
      // correction beyond its model's reach). Once more with the delays held to a tighter
      // reach; failing that, the fit before them, and what they would have corrected goes into
      // U whole.
      if (reach > FALLBACK_DELAY_RAD) {
        reach = FALLBACK_DELAY_RAD;
        delays = delaysAt(prev!.p, prev!, c, timing, reach);
        pass--;
        continue;
      }
      unapplied = delays;
      s = prev!;
      skew = prevSkew;
      delays = prevDelays;
      break;
    }
    if (pass === MAX_TIMING_FITS - 1) break;
    const lf = linearFitOf(s);
    const next = delaysAt(s.p, s, c, timing, reach);
    // The skew is estimated once the other delays are in the times (the first fit has them
    // not, and a skew would absorb part of them).
    const step = pass === 0 ? 0 : skewStep(lf, prior - skew, priorU).step_s;
    for (let k = 0; k < n; k++) dd[k] = (c.rising[k] === 1 ? step : 0) + next.fp_s[k] - delays.fp_s[k] + next.od_s[k] - delays.od_s[k];
    const effect = delayEffectSd(lf, dd);
    if (!(effect > TIMING_SETTLED_SD)) break;
    prev = s;
    prevSkew = skew;
    prevDelays = delays;
    skew += step;
    delays = next;
  }
  const st = skewStep(linearFitOf(s), prior - skew, priorU);
  const assumed = skew;
  skew = finishTiming(s, c, timing, assumed, prior, priorU, delays, unapplied, reach);
  if (s.alternative) finishTiming(s.alternative, c, timing, assumed, prior, priorU, delays, unapplied, reach);
  if (Number.isFinite(priorU) && priorU > 0 && (s.timingSkewSd ?? 0) > SKEW_PRIOR_BOUND * priorU) marginalizeSkew(s, c, prior, priorU, delays);
  let fpMax = 0, odMax = 0;
  for (let k = 0; k < n; k++) {
    if (!(s.used[k] > 0)) continue;
    fpMax = Math.max(fpMax, -delays.fp_s[k]);
    odMax = Math.max(odMax, delays.od_s[k]);
  }
  s.timing = {
    corrected: true, skew_s: skew, skew_sd_s: s.timingSkewSd ?? NaN, capture_skew_step_s: st.capture_step_s, capture_skew_sd_s: st.capture_sd_s,
    skew_source: timing.skew_source ?? "caller", prior_skew_s: prior, prior_skew_u_s: priorU, fp_max_s: fpMax, od_max_s: odMax,
    delays,
  };
  return s;
}

/**
 * A skew the capture does not pin down well (its sd after capture and prior above this fraction
 * of the prior's) is integrated over its prior (marginalizeSkew) instead of linearised about one
 * value (bench practice: at half the prior's, a 16 kHz Q 500 ring cut after 500 edges with 33 ns
 * of skew, sd about 7 ns against the 20 ns prior, was left linearised and U(Q) covered 77 % of the
 * seeds; integrated, 99 %).
 */
const SKEW_PRIOR_BOUND = 0.25;
/** The prior's span and grid for that: +-2.5 u in steps of 0.5 u. */
const MARGIN_SPAN_U = 2.5;
const MARGIN_STEP_U = 0.5;

/**
 * Where the capture says little about the skew, the fit at one skew value and its linearised
 * covariance understate what the skew does: on a short offset-threshold ring the skew trades
 * against the amplitude law the decay is read from, and a fit pulled towards the prior's value
 * settles at a decay several of its own sd off (L read 1 U high, covered in 18 % of the seeds, at
 * 33 ns of skew against a 0 +- 20 ns prior on a 40-edge 59 kHz ring). The ring is fitted at skews
 * across the prior and the fits are weighted by likelihood times prior, exp(-(nll + z^2)/2): the
 * reported ring parameters become the weighted mean, and their covariance gains the weighted
 * spread of the fits about it (the law of total variance: a numerical marginalisation of the skew
 * as a nuisance parameter, as in JCGM 101:2008 §5.1 for an input known only through its
 * distribution). Never narrows.
 */
function marginalizeSkew(s: FitState, c: CheckedInput, prior: number, priorU: number, delays: TimingDelays): void {
  const n = c.t_s.length;
  const fits: { p: Float64Array; cost: number }[] = [];
  for (let z = -MARGIN_SPAN_U; z <= MARGIN_SPAN_U + 1e-9; z += MARGIN_STEP_U) {
    const skew = prior + z * priorU;
    const t = new Float64Array(n);
    for (let k = 0; k < n; k++) {
      t[k] = c.t_s[k] - (c.rising[k] === 1 ? skew : 0) - delays.fp_s[k] - delays.od_s[k];
      if (k > 0 && t[k] < t[k - 1]) t[k] = t[k - 1];
    }
    try {
      const f = fitCapture({ ...c, t_s: t });
      fits.push({ p: f.p, cost: f.nll + z * z });
    } catch {
      // No ring at this skew: it carries no weight.
    }
  }
  if (fits.length < 3) return;
  const best = Math.min(...fits.map((f) => f.cost));
  const w = fits.map((f) => Math.exp(-0.5 * (f.cost - best)));
  const sw = w.reduce((x, y) => x + y, 0);
  let wd = 0, alpha = 0;
  for (let j = 0; j < fits.length; j++) {
    wd += (w[j] / sw) * fits[j].p[P_WD];
    alpha += (w[j] / sw) * fits[j].p[P_ALPHA];
  }
  s.p[P_WD] = wd;
  s.p[P_ALPHA] = alpha;
  s.skewMixture = fits.map((f, j) => ({ wd: f.p[P_WD], alpha: f.p[P_ALPHA], w: w[j] / sw }));
}

/**
 * Where the skew's prior is broad against the ring's period, a fit at the prior's value can land
 * far from the truth (on offset thresholds a skew of a tenth of a radian distorts the amplitude
 * law the fit reads Q from) and Gauss-Newton steps in the skew cannot climb back: fits at skews
 * SKEW_SEARCH_STEPS spaced across the prior are compared by their robust -2 ln L plus the prior's
 * ((skew - prior) / u)^2, and the best is where the correction loop starts.
 */
function searchSkew(c: CheckedInput, prior: number, priorU: number): number {
  if (!(priorU > 0)) return prior;
  const shifted = (skew: number): CheckedInput => {
    const t = new Float64Array(c.t_s.length);
    for (let k = 0; k < t.length; k++) {
      t[k] = c.t_s[k] - (c.rising[k] === 1 ? skew : 0);
      if (k > 0 && t[k] < t[k - 1]) t[k] = t[k - 1];
    }
    return { ...c, t_s: t };
  };
  let best = { skew: prior, cost: Infinity };
  let wd = 0;
  try {
    const f = fitCapture(shifted(prior));
    best = { skew: prior, cost: f.nll };
    wd = f.p[P_WD];
  } catch {
    // The fit at the prior failed: the search below may still find a ring.
  }
  // The span searched: SKEW_SEARCH_SPAN_U of the prior's uncertainty (of UNKNOWN_SKEW_SPAN_S
  // when there is no prior), in steps of SKEW_SEARCH_STEP_RAD of ring phase, at most
  // SKEW_SEARCH_MAX_STEPS a side.
  const span = SKEW_SEARCH_SPAN_U * (Number.isFinite(priorU) ? priorU : UNKNOWN_SKEW_SPAN_S);
  if (!(wd > 0) || !(span * wd > SKEW_SEARCH_MIN_SPAN_RAD)) return prior;
  const steps = Math.min(SKEW_SEARCH_MAX_STEPS, Math.ceil((span * wd) / SKEW_SEARCH_STEP_RAD));
  for (let k = -steps; k <= steps; k++) {
    if (k === 0) continue;
    const skew = prior + (k * span) / steps;
    try {
      const f = fitCapture(shifted(skew));
      const cost = f.nll + (Number.isFinite(priorU) ? ((skew - prior) / priorU) ** 2 : 0);
      if (cost < best.cost) best = { skew, cost };
    } catch {
      // No ring at this skew: not a candidate.
    }
  }
  return best.skew;
}

/** The skew search (searchSkew): +-2.5 prior standard uncertainties in steps of 0.1 rad of ring
 *  phase, at most 8 a side (bench practice: a fit started 0.3 rad off the true skew on a
 *  3.4 MHz offset-threshold ring ended in a false basin); none where the whole span is under
 *  SKEW_SEARCH_MIN_SPAN_RAD. Without a prior, +-2.5 x 30 ns. */
const SKEW_SEARCH_SPAN_U = 2.5;
const SKEW_SEARCH_STEP_RAD = 0.1;
const SKEW_SEARCH_MAX_STEPS = 8;
/** Below this span of ring phase (rad) the Gauss-Newton steps from the prior's value suffice. */
const SKEW_SEARCH_MIN_SPAN_RAD = 0.3;
const UNKNOWN_SKEW_SPAN_S = 30e-9;

/** The delays (first passage, overdrive) the model p predicts at the clean crossings, each held
 *  within reachRad of ring phase. */
function delaysAt(p: ArrayLike<number>, s: FitState, c: CheckedInput, timing: ComparatorTiming, reachRad: number): TimingDelays {
  const n = s.edges.n;
  const reach = new Float64Array(n);
  const slope = new Float64Array(n);
  const clean = new Float64Array(n);
  const t = s.checked.t_s;
  for (let k = 0; k < n; k++) {
    clean[k] = s.used[k] > 0 && s.edges.form[k] === 1 ? 1 : 0;
    if (!clean[k]) continue;
    const rise = s.edges.rising[k] === 1;
    const level = rise ? c.vh_v : c.vl_v;
    slope[k] = ringSlopeAt(p, t[k], level, rise);
    reach[k] = rampReach(p[P_WD], reachRad);
  }
  const other = (s.checked.tick_s * s.checked.tick_s) / 12 + s.noise.sigma_t2;
  return edgeDelays(slope, clean, Math.sqrt(s.noise.sigma_v2), timing, reach, other);
}

/**
 * The last step with the timing terms (comparator-timing.ts, jointTimingStep): the skew's
 * Gauss-Newton step with its prior, applied to the fit's parameters, and the covariance those
 * terms add (skew estimated with the ring, Type B first-passage and overdrive terms), scaled by
 * the fit's own inflation. Returns the skew.
 */
function finishTiming(
  s: FitState, c: CheckedInput, timing: ComparatorTiming, skew: number, prior: number, priorU: number, delays: TimingDelays,
  unapplied: TimingDelays | null, reachRad: number,
): number {
  const lf = linearFitOf(s);
  const j = jointTimingStep(lf, prior - skew, priorU, delays, timing, unapplied);
  if (!j) return skew;
  const inflation = j.base_alpha_var > 0 ? Math.max(1, s.cov[15] / j.base_alpha_var) : 1;
  // The corrections follow the fitted ring: what that adds to the scatter (correctionCovariance),
  // from the delays' derivatives by central differences in the four ring parameters.
  const n = s.edges.n;
  const ddp = new Float64Array(4 * n);
  const steps = [1e-7 * s.p[P_WD], 1e-6, 1e-6, 1e-6 * Math.max(s.p[P_ALPHA], 1e-9 * s.p[P_WD])];
  for (let i = 0; i < 4 && applied(delays); i++) {
    const hi = s.p.slice();
    const lo = s.p.slice();
    hi[i] += steps[i];
    lo[i] -= steps[i];
    const dh = delaysAt(hi, s, c, timing, reachRad);
    const dl = delaysAt(lo, s, c, timing, reachRad);
    for (let k = 0; k < n; k++) ddp[4 * k + i] = (dh.fp_s[k] + dh.od_s[k] - dl.fp_s[k] - dl.od_s[k]) / (2 * steps[i]);
  }
  const cc = applied(delays) ? correctionCovariance(lf, ddp) : null;
  // Only where it widens: a negative diagonal would say the corrections carry information, which
  // the delay model is not trusted for.
  if (cc && cc[0] >= 0 && cc[5] >= 0 && cc[10] >= 0 && cc[15] >= 0) for (let i = 0; i < 16; i++) s.cov[i] += cc[i] * inflation;
  for (let i = 0; i < 4; i++) s.p[i] += j.dp[i];
  for (let i = 0; i < 16; i++) s.cov[i] += j.added_cov[i] * inflation;
  s.timingSkewSd = j.skew_sd_s * Math.sqrt(inflation);
  return skew + j.dskew_s;
}

/** The weighted linear pieces of a converged fit (comparator-timing.ts). */
function linearFitOf(s: FitState): LinearFit {
  const w = new Float64Array(s.edges.n);
  for (let k = 0; k < w.length; k++) w[k] = s.used[k] > 0 ? 1 / s.variance[k] : 0;
  return { r: s.r, jac: s.jac, slope: s.slope, w, rising: s.edges.rising };
}

/** One fit of the thresholds' edge model to the capture's (corrected) edge times. */
function fitCapture(c: CheckedInput): FitState {
  const n = c.t_s.length;
  const tickVar_s2 = (c.tick_s * c.tick_s) / 12;
  const book = assignHalfCycles(c.t_s, c.rising);
  if (!(book.period_s > 0)) throw noRing("no repeating edges were found");
  const e0 = makeEdgeSet(c.t_s, c.rising, book.m);
  if (countFinite(e0.m) < MIN_EDGES) throw noRing("too few edges fall into a regular ring");
  const candidates = initialCandidates(e0, c.vh_v, c.vl_v, 3, n <= FEW_EDGES_BOTH_STARTS);
  if (candidates.length === 0) throw noRing("no damped sine explains the edge times");

  const ws = captureWorkspace(n);
  const limits = fitLimits(e0, c, candidates[0].p[P_WD]);
  const subset = rankingSubset(e0);
  const starts = rankStarts(candidates, e0, subset, c, tickVar_s2, ws, limits);
  // Each full fit re-indexes edges and sets residual forms: it gets its own copy of the edges.
  // Round 0 of a long capture fits the ranking's subset (fitFrom).
  const fitFromStart = (k: number, reference?: FitState): FitState | null =>
    fitFrom(
      {
        c, e: makeEdgeSet(c.t_s, c.rising, book.m.slice()), reasons: book.reasons.slice(), ws, limits, tickVar_s2,
        round0Subset: n > 400 ? subset : null,
      },
      starts[k], reference,
    );
  let firstError: unknown = null;
  const tries = starts.length > 1 && (n <= FEW_EDGES_BOTH_STARTS || closeRunnerUp(starts[0], starts[1])) ? 2 : 1;
  const fits: FitState[] = [];
  for (let k = 0; k < tries; k++) {
    try {
      const f = fitFromStart(k, fits[0]);
      if (f) fits.push(f);
    } catch (err) {
      if (firstError === null) firstError = err;
    }
  }
  if (fits.length === 0) throw firstError;
  fits.sort((a, b) => a.nll - b.nll);
  const best = fits[0];
  if (fits.length > 1 && fits[1].nll - best.nll < AMBIGUOUS_NLL) best.alternative = fits[1];
  return best;
}

/** Whether the runner-up start's short fit ended close enough to the best's to fit it in full. */
function closeRunnerUp(best: RankedStart, next: RankedStart): boolean {
  if (!(next.chi2 <= RUNNER_UP_CHI2_RATIO * best.chi2)) return false;
  // A runner-up whose subset likelihood could not be scored (Infinity) is not ruled out by it.
  return !(Number.isFinite(next.nll) && next.nll - best.nll > RUNNER_UP_SUBSET_NLL);
}

/** What one full fit from one start (fitFrom) works on, fixed for the fit. */
interface FitSetting {
  c: CheckedInput;
  /** The fit's own copy of the edges: it re-indexes them and sets their residual forms. */
  e: EdgeSet;
  /** Why each edge is set aside (the fit's own copy). */
  reasons: (string | null)[];
  ws: FitWorkspace;
  limits: FitLimits;
  /** tick^2 / 12, s^2. */
  tickVar_s2: number;
  /** Round 0 of a long capture fits only these edges (null: all of them). */
  round0Subset: Float64Array | null;
}

/**
 * What the rounds of one full fit carry from one round to the next (fitFrom). The per-edge
 * arrays are made once for the fit (the returned FitState keeps `variance` and `used`) or lent
 * by the capture's workspace (ws.roundScratch: the rest, contents undefined between fits).
 * Made at the start: residual forms and round-0 variances at the start's parameters.
 */
class Rounds implements FitSetting {
  readonly c: CheckedInput;
  readonly e: EdgeSet;
  readonly reasons: (string | null)[];
  readonly ws: FitWorkspace;
  readonly limits: FitLimits;
  readonly tickVar_s2: number;
  readonly round0Subset: Float64Array | null;
  readonly n: number;
  /** The model's parameters (edge-model.ts). */
  p: Float64Array;
  /** Residual variance per edge, V^2, and timing variance per edge, s^2 (noise-model.ts). */
  readonly variance: Float64Array;
  readonly timingVar_s2: Float64Array;
  /** 1 where reweight set the edge aside as an outlier. */
  readonly outlier: Uint8Array;
  /** 1 where the edge takes part in the fit: indexed, and not an outlier. */
  readonly used: Float64Array;
  /** Huber weight per edge (reweight). */
  readonly robust: Float64Array;
  /** Fit weight per edge: robust / variance where used, else 0. */
  readonly w: Float64Array;
  /** 1 where the edge has a half-cycle index. */
  readonly assigned: Float64Array;
  /** Each edge's leverage in the round's fit (0 where not used). */
  readonly leverage: Float64Array;
  /** The clean crossings (used, phase form) the noise is estimated from when there are enough. */
  readonly noiseMask: Float64Array;
  /** Standardised residuals of the assigned edges; those of the used edges packed in zUsed. */
  readonly z: Float64Array;
  readonly zUsed: Float64Array;
  /** Scratch: medians, the residual sd for re-indexing, the scales and forms before reform. */
  readonly zWork: Float64Array;
  readonly sd: Float64Array;
  readonly oldScale: Float64Array;
  readonly oldForm: Uint8Array;
  noise: NoiseEstimate | null = null;
  /** Robust standard deviation of the standardised residuals (reweight). */
  zScale = 1;
  /** ws.r, ws.jac, ws.slope and ws.curvature hold the model at p with the current forms and
   *  timing variances: then neither a round's fit nor its checks evaluate the model again. */
  cached = false;
  /** Where the edges were last re-indexed (null: not yet), and what that re-indexing left to show
   *  that one at a nearby model would change nothing (model-bookkeeping.ts indicesHold). */
  pIndexed: Float64Array | null = null;
  readonly margin: IndexMargin = { margin_rad: 0, max_u: 0, max_t_s: 0, duplicates: true };
  /** How often the forms were chosen again once settled (staleForms in fitFrom). */
  reforms = 0;

  constructor(s: FitSetting, guess: InitialGuess) {
    const { c, e, ws } = s;
    this.c = c;
    this.e = e;
    this.reasons = s.reasons;
    this.ws = ws;
    this.limits = s.limits;
    this.tickVar_s2 = s.tickVar_s2;
    this.round0Subset = s.round0Subset;
    const n = c.t_s.length;
    this.n = n;
    this.p = guess.p;
    // Round 0 fits `round0Subset` of a long capture (null: all edges), and the forms and every
    // variance are set anew after it: the start's forms and variances are needed on the subset
    // alone (variance Infinity, weight zero, elsewhere).
    chooseResidualForms(guess.p, e, c.vh_v, c.vl_v, s.round0Subset);
    this.variance = initialVariance(guess.p, e, Math.max(guess.ms_residual_s2, s.tickVar_s2), ws, s.round0Subset);
    const [robust, assigned, w, leverage, sd, z, zUsed, noiseMask, zWork, oldScale, timingVar_s2] = ws.roundScratch(11);
    robust.fill(1);
    timingVar_s2.fill(s.tickVar_s2);
    this.timingVar_s2 = timingVar_s2;
    this.outlier = new Uint8Array(n);
    this.used = new Float64Array(n);
    this.robust = robust;
    this.w = w;
    this.assigned = assigned;
    this.leverage = leverage;
    this.noiseMask = noiseMask;
    this.z = z;
    this.zUsed = zUsed;
    this.zWork = zWork;
    this.sd = sd;
    this.oldScale = oldScale;
    this.oldForm = new Uint8Array(n);
  }
}

/** One full fit from one start: rounds of fit, re-index, noise, reweight until settled. */
function fitFrom(setting: FitSetting, guess: InitialGuess, reference?: FitState): FitState | null {
  const f = new Rounds(setting, guess);
  const { c, ws } = f;
  let fit!: EdgeFitResult;
  let staleForms = false;
  weigh(f);
  for (let round = 0; ; round++) {
    // Residual forms follow the model while it is still moving (set at the start, again after
    // round 0's fit and re-indexing), then stay, so that the weights of a round and its
    // residuals use the same scales; unless the model has since moved an edge across the
    // grazing limit (a phase-form edge the envelope no longer clearly reaches), which is chosen
    // again, a few times at most.
    if (staleForms) {
      reform(f, null);
      f.reforms++;
      weigh(f);
    }
    // Round 0 weights with a rough noise model and only has to bring the start near the
    // minimum: a few steps on a subset of the edges (the tail and a spread) suffice there (the
    // others have no variance yet, so weight zero).
    fit = fitEdgeModel(f.e, f.p, f.w, ws, {
      vh_v: c.vh_v, vl_v: c.vl_v, timingVar_s2: f.timingVar_s2, limits: f.limits, maxIterations: round < 2 ? 6 : 60,
      tolChi2: FIT_TOL_CHI2, reuseEvaluation: f.cached, weightedOnly: round === 0,
    });
    if (!Number.isFinite(fit.chi2)) throw noRing("the edge-model fit diverged");
    f.p = fit.p;
    f.cached = fit.fresh && round > 0;
    // A runner-up that has come within a standard deviation of the first fit after its first
    // round with a noise model is on its way to the same minimum: nothing to compare.
    if (reference && round === 1 && sameBasin(f.p, reference, 1)) return null;
    if (round === MAX_ROUNDS) break;

    const moved = reindex(f, round);
    const cov = invertSymmetric(4, fit.normal);
    if (!cov) throw noRing("too few edges fit a ring");
    const counts = weighAndCount(f, cov);
    if (counts.assigned < MIN_EDGES) throw noRing("too few edges fit a ring");
    // Grazing edges (level form) say little about the noise and their residuals are bounded by
    // the ring's excursion past the threshold, which would pull sigma_v down: the noise is
    // estimated from the clean crossings when there are enough of them. (reweight's and the
    // re-indexing's scratch arrays serve the estimate too.)
    f.noise = estimateNoise(
      {
        r: ws.r, slope: ws.slope, curvature: ws.curvature, timingVar_s2: f.timingVar_s2, leverage: f.leverage,
        mask: counts.clean >= 12 ? f.noiseMask : f.used, tickVar_s2: f.tickVar_s2,
      },
      f.noise, [f.z, f.zUsed, f.zWork, f.sd],
    );
    // New variances, and the residuals standardised by them for reweight; the residuals'
    // second-order term follows the new timing variances (edge-model.ts). A 5 % change of the
    // weights moves the estimates by a negligible second-order amount.
    const change = updateVariances({
      tickVar_s2: f.tickVar_s2, noise: f.noise, slope: ws.slope, curvature: ws.curvature, wd: f.p[P_WD],
      assigned: f.assigned, used: f.used, timingVar_s2: f.timingVar_s2, variance: f.variance, r: ws.r, z: f.z, zUsed: f.zUsed,
    });
    const noiseMoved = change.mean_change > 0.05;
    // A runner-up already far less likely than the first fit stays so: its -2 ln L fell by at
    // most ~75 after round 1 in the benchmark's captures, and it could only matter within
    // AMBIGUOUS_NLL of the first fit.
    if (reference && round >= 1 && negLogLikelihood(ws.r, f.timingVar_s2, f.variance, f.e, f.used) - reference.nll > RUNNER_UP_GIVE_UP_NLL) return null;
    const flipped = reweight(f, change.used_z, round > 0);
    // Settled: the round's fit converged (a round-1 fit stopped by its 6-step cap has not, and
    // ~11 % of the benchmark's 500-edge fits would otherwise have been reported from there),
    // and nothing it depends on changed. Forms are checked only then (the check costs a pass).
    const settled = round >= 1 && fit.converged && moved === 0 && flipped === 0 && !noiseMoved;
    staleForms = settled && f.reforms < 3 && formChanges(f.p, f.e, c.vh_v, c.vl_v) > 0;
    if (settled && !staleForms) break;
  }
  return finishRounds(f, fit);
}

/**
 * Chooses the residual forms again at p. A phase-form residual is S_k times a phase error, so
 * its variance goes with S_k^2: an edge that keeps the phase form under a new scale keeps its
 * weight, and chi2 its units (with the start's scales after round 0 had moved the amplitude,
 * chi2 came out up to ~400x too large and its stopping tolerance as much too tight).
 * `amp`: the model envelope at p per edge, when the re-indexing at p has just computed it.
 */
function reform(f: Rounds, amp: Float64Array | null): void {
  const { e, variance, oldScale, oldForm, n } = f;
  oldScale.set(e.scale_v);
  oldForm.set(e.form);
  chooseResidualForms(f.p, e, f.c.vh_v, f.c.vl_v, null, amp);
  for (let k = 0; k < n; k++) {
    if (oldForm[k] !== 1 || e.form[k] !== 1) continue;
    const ratio = e.scale_v[k] / oldScale[k];
    variance[k] *= ratio * ratio;
  }
  f.cached = false;
}

/**
 * After a round's fit: re-indexes the edges from the model, unless it has barely moved since
 * the last re-indexing (then no edge can change half-cycle: the model phase at the last edge
 * moved by under 0.01 rad), or unless no edge's model phase can have moved as far as the nearest
 * half-cycle boundary (indicesHold: re-indexing would change nothing, except clearing the
 * reasons of edges no longer rejected, which nothing reads). Round 0 then chooses the forms for
 * the indices just set, before the evaluation that round 1's fit starts from. Leaves the model
 * at p in ws (f.cached). Returns how many indices changed.
 */
function reindex(f: Rounds, round: number): number {
  const { c, ws } = f;
  let moved = 0;
  let ampAtP: Float64Array | null = null;
  if (!f.pIndexed || (phaseShift(f.pIndexed, f.p, f.limits.t_last_s) > 0.01 && !indicesHold(f.pIndexed, f.p, f.margin))) {
    // Duplicates are compared in plain volts while round 0's variances cover a subset only.
    let sd: Float64Array | null = null;
    if (!(round === 0 && f.round0Subset)) {
      sd = f.sd;
      const variance = f.variance;
      for (let k = 0; k < sd.length; k++) sd[k] = Math.sqrt(variance[k]);
    }
    // (z is free until the variances are updated: it takes the envelope for reform.)
    moved = reassignHalfCycles(f.p, f.e, c.vh_v, c.vl_v, sd, f.reasons, f.margin, f.z);
    f.pIndexed = f.p;
    ampAtP = f.z;
  }
  if (round === 0) reform(f, ampAtP);
  if (moved > 0 || !f.cached) {
    evaluateEdges(f.p, f.e, c.vh_v, c.vl_v, null, f.timingVar_s2, { r: ws.r, jac: ws.jac, slope: ws.slope, curvature: ws.curvature });
    // The edges without an index too (slope and curvature only): their variances are set from
    // them (updateVariances). Round 0 always gets here, so every edge's slope is this fit's own.
    evaluateUnindexed(f.p, f.e, c.vh_v, c.vl_v, f.zWork, { slope: ws.slope, curvature: ws.curvature });
    f.cached = true;
  }
  return moved;
}

/** Each edge's part in the next fit: used (indexed, not an outlier) and its weight. */
function weigh(f: Rounds): void {
  const { e, outlier, robust, variance, used, w, n } = f;
  for (let k = 0; k < n; k++) {
    used[k] = e.m[k] === e.m[k] && !outlier[k] ? 1 : 0;
    w[k] = used[k] > 0 ? robust[k] / variance[k] : 0;
  }
}

/**
 * One pass over the edges after a round's re-indexing: each edge's part in the fit and weight
 * (weigh), whether it has an index, whether it is a clean crossing for the noise estimate, and
 * its leverage h_k = w_k J_k cov J_k^T (cov: the fit's parameter covariance). Returns how many
 * edges are indexed and how many are clean.
 */
function weighAndCount(f: Rounds, cov: Float64Array): { assigned: number; clean: number } {
  const { e, outlier, robust, variance, used, w, assigned, noiseMask, leverage, n } = f;
  const jac = f.ws.jac;
  const c00 = cov[0], c01 = cov[1], c02 = cov[2], c03 = cov[3], c11 = cov[5], c12 = cov[6], c13 = cov[7];
  const c22 = cov[10], c23 = cov[11], c33 = cov[15];
  let nAssigned = 0;
  let clean = 0;
  for (let k = 0; k < n; k++) {
    const indexed = e.m[k] === e.m[k];
    const u = indexed && !outlier[k] ? 1 : 0;
    used[k] = u;
    const wk = u > 0 ? robust[k] / variance[k] : 0;
    w[k] = wk;
    assigned[k] = indexed ? 1 : 0;
    nAssigned += assigned[k];
    noiseMask[k] = u > 0 && e.form[k] === 1 ? 1 : 0;
    clean += noiseMask[k];
    if (!(u > 0)) {
      leverage[k] = 0;
      continue;
    }
    const o = 4 * k;
    const j0 = jac[o], j1 = jac[o + 1], j2 = jac[o + 2], j3 = jac[o + 3];
    const s =
      j0 * (c00 * j0 + 2 * (c01 * j1 + c02 * j2 + c03 * j3)) +
      j1 * (c11 * j1 + 2 * (c12 * j2 + c13 * j3)) +
      j2 * (c22 * j2 + 2 * c23 * j3) +
      j3 * c33 * j3;
    leverage[k] = Math.min(1, Math.max(0, s * wk));
  }
  return { assigned: nAssigned, clean };
}

/**
 * Huber-weights the standardised residuals (f.z, from updateVariances; the first `usedCount`
 * of f.zUsed are the used edges') on a MAD scale and (when `reject`) sets aside those beyond
 * REJECT_Z, with a little hysteresis. Edges rejected before are re-tested, so an edge set aside
 * under a poor early model comes back. The same pass sets the next fit's weights (weigh).
 * Returns how many edges changed side; the scale goes into f.zScale (the outliers' reasons are
 * written once, from the last reweight, by finishRounds).
 */
function reweight(f: Rounds, usedCount: number, reject: boolean): number {
  const { e, z, assigned, robust, outlier, used, w, variance, n } = f;
  const zScale = Math.max(0.5, madSigma(f.zUsed, usedCount, f.zWork));
  f.zScale = zScale;
  let flipped = 0;
  for (let k = 0; k < n; k++) {
    if (assigned[k] > 0) {
      const zk = z[k] / zScale;
      robust[k] = huberWeight(zk, HUBER_C);
      if (reject) {
        const isOut = Math.abs(zk) > (outlier[k] ? REJECT_Z - 0.5 : REJECT_Z) ? 1 : 0;
        if (isOut !== outlier[k]) flipped++;
        outlier[k] = isOut;
      }
    }
    used[k] = e.m[k] === e.m[k] && !outlier[k] ? 1 : 0;
    w[k] = used[k] > 0 ? robust[k] / variance[k] : 0;
  }
  return flipped;
}

/** The settled fit's covariance (inflated where the residuals say so), checks and FitState. */
function finishRounds(f: Rounds, fit: EdgeFitResult): FitState {
  const { c, e, ws, p, variance, used, timingVar_s2, zWork, n } = f;
  const cov = invertSymmetric(4, fit.normal);
  if (!cov || !f.noise) throw noRing("the fit has no covariance");
  if (!f.cached) evaluateEdges(p, e, c.vh_v, c.vl_v, null, timingVar_s2, { r: ws.r, jac: ws.jac, slope: ws.slope, curvature: ws.curvature });
  // (used and w are those of the last fit: nothing they depend on has changed since.)
  let nUsed = 0;
  let nt = 0;
  for (let k = 0; k < n; k++) {
    nUsed += used[k];
    if (used[k] > 0) zWork[nt++] = timingVar_s2[k];
  }
  // Birge-type inflation (never deflation) when residuals exceed the noise model, and for
  // residuals correlated from edge to edge (fewer independent edges than it seems).
  const birge = nUsed > 4 ? Math.max(1, fit.chi2 / (nUsed - 4)) : 1;
  const inflation = birge * correlationInflation(residualCorrelation(ws.r, variance, used, e.rising));
  for (let i = 0; i < 16; i++) cov[i] *= inflation;
  if (!(p[P_ALPHA] > 0)) throw noRing("the fitted ring does not decay");
  // Edges that only a timing noise of a tenth of a period (36 degrees) or more can explain, or a
  // fit that sets aside most edges, are not a ring: refuse rather than report a number.
  const period = (2 * Math.PI) / p[P_WD];
  const typical = Math.sqrt(median(zWork, nt, f.zUsed));
  if (nUsed < 0.5 * n || !(typical < 0.1 * period)) throw noRing("the edges do not follow one damped sine");
  // An edge without an index has no residual (NaN) and no Jacobian row (zero), whatever the
  // workspace holds there; an outlier's reason gives its residual at the last reweight.
  const r = ws.r.slice();
  const jac = ws.jac.slice();
  for (let k = 0; k < n; k++) {
    if (e.m[k] === e.m[k]) {
      if (f.outlier[k]) f.reasons[k] = `residual ${Math.abs(f.z[k] / f.zScale).toFixed(1)} robust sd from the ring model (outlier)`;
      continue;
    }
    r[k] = NaN;
    jac.fill(0, 4 * k, 4 * k + 4);
  }
  return {
    checked: c, edges: e, p, cov, r, jac, slope: ws.slope.slice(), variance, used,
    z_scale: f.zScale, noise: f.noise, reasons: f.reasons, chi2: fit.chi2, nll: negLogLikelihood(ws.r, timingVar_s2, variance, e, used),
  };
}

/** Within k_sd standard deviations of the reference fit in amplitude, decay and frequency. */
function sameBasin(p: Float64Array, ref: FitState, k_sd: number): boolean {
  for (const i of [P_WD, P_LNA, P_ALPHA]) {
    const sd = Math.sqrt(ref.cov[5 * i]);
    if (!(Math.abs(p[i] - ref.p[i]) <= k_sd * sd)) return false;
  }
  return true;
}

/** Largest change of the model phase (rad) over the capture, including amplitude terms. */
function phaseShift(a: Float64Array, b: Float64Array, t_last_s: number): number {
  return (
    Math.abs(b[P_WD] - a[P_WD]) * t_last_s + Math.abs(b[P_PHI] - a[P_PHI]) +
    Math.abs(b[P_LNA] - a[P_LNA]) + Math.abs(b[P_ALPHA] - a[P_ALPHA]) * t_last_s
  );
}

function fmt(x: number): string {
  return x.toPrecision(3);
}

function countFinite(m: Float64Array): number {
  let c = 0;
  for (let k = 0; k < m.length; k++) if (m[k] === m[k]) c++;
  return c;
}

function noRing(why: string): AnalysisError {
  return new AnalysisError("NO_RING", `${why}: the part may be overdamped, open or shorted; check the connection, raise the drive current or use a larger tank capacitance`);
}
