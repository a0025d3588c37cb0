// Weighted Levenberg-Marquardt fit of the edge model (edge-model.ts). Marquardt's scaling of the
// damping by diag(J^T W J) makes the steps independent of parameter units (D. W. Marquardt,
// J. SIAM 11(2), 1963); the diagonal is taken in centred coordinates (centre, below). Weights
// are held fixed inside a fit; the caller re-weights between fits (iteratively reweighted least
// squares).

import { C2_CONT, evaluateEdges, N_PARAMS, P_ALPHA, P_LNA, type EdgeSet } from "./edge-model.ts";
import { solveDamped } from "./small-linear-algebra.ts";

/**
 * Soft limits that keep the fit out of directions the edges cannot pin down. With symmetric
 * thresholds and weak amplitude information the likelihood flattens as A0 -> infinity (the
 * delays asin(V/A) vanish and alpha stops mattering), and alpha may drift below zero (a growing
 * ring), or run to A0 -> infinity with alpha -> infinity (all the decay squeezed before the
 * last edges). Stiff one-sided penalties stop all three: ln(A(t_last)/V_stop) <= e_max,
 * ln(A0/V_stop) <= a_max, alpha >= alpha_min. Inside the limits they contribute nothing, and
 * they never enter the covariance (EdgeFitResult.normal is the edges' information only).
 */
export interface FitLimits {
  t_last_s: number;
  ln_v_stop: number;
  /** Limit on ln(A(t_last) / V_stop). */
  e_max: number;
  /** Limit on ln(A0 / V_stop). */
  a_max: number;
  alpha_min: number;
  /**
   * When the ring is known to have ended: half a period after the last edge the envelope is
   * below the next edge's threshold, ln A(t_next) <= ln_v_next (+5 % for noise).
   */
  t_next_s?: number;
  ln_v_next?: number;
  /**
   * The alternative when the last edge may have been lost: a period after the last edge the
   * envelope is below the last edge's own threshold. The limit holds when either does.
   */
  t_next2_s?: number;
  ln_v_next2?: number;
}

export interface EdgeFitResult {
  p: Float64Array;
  /** Sum of w r^2 at p. */
  chi2: number;
  /** J^T W J at p (row-major 4 x 4). */
  normal: Float64Array;
  iterations: number;
  converged: boolean;
  /** ws.r, ws.jac, ws.slope and ws.curvature hold the model at p. */
  fresh: boolean;
}

/**
 * Scratch buffers for one capture, reused across its fits (and, from captureWorkspace, across
 * captures): their contents are undefined when a capture starts, and nothing the analysis
 * returns may depend on them (the per-edge arrays are views of n entries into buffers that grow
 * as needed).
 */
export class FitWorkspace {
  r!: Float64Array;
  jac!: Float64Array;
  slope!: Float64Array;
  curvature!: Float64Array;
  /** Edges to evaluate (null: all indexed edges). */
  mask: Float64Array | null = null;
  readonly h = new Float64Array(N_PARAMS * N_PARAMS);
  readonly g = new Float64Array(N_PARAMS);
  readonly h2 = new Float64Array(N_PARAMS * N_PARAMS);
  readonly g2 = new Float64Array(N_PARAMS);
  /** Penalty terms at the last evaluated point, and the penalised system at p. */
  readonly hp = new Float64Array(N_PARAMS * N_PARAMS);
  readonly gp = new Float64Array(N_PARAMS);
  readonly hp1 = new Float64Array(N_PARAMS * N_PARAMS);
  readonly gp1 = new Float64Array(N_PARAMS);
  readonly hs = new Float64Array(N_PARAMS * N_PARAMS);
  readonly gs = new Float64Array(N_PARAMS);
  readonly step = new Float64Array(N_PARAMS);
  readonly trial = new Float64Array(N_PARAMS);
  readonly work = new Float64Array(N_PARAMS * N_PARAMS + N_PARAMS);
  /** Geodesic acceleration: the Jacobian at the current point. */
  jp!: Float64Array;
  readonly ga = new Float64Array(N_PARAMS);
  readonly acc = new Float64Array(N_PARAMS);
  /** The damped system in centred coordinates (centre): its matrix, right-hand side, the two
   *  reference times, and the step and acceleration in those coordinates. */
  readonly hc = new Float64Array(N_PARAMS * N_PARAMS);
  readonly bc = new Float64Array(N_PARAMS);
  readonly tc = new Float64Array(2);
  readonly vc = new Float64Array(N_PARAMS);
  readonly ac = new Float64Array(N_PARAMS);
  /** Per-edge scratch for the rounds around the fits (analyze-ring.ts), one block for the
   *  capture: allocating a typed array of a few kB costs more than a pass over it. */
  private roundBlock: Float64Array | null = null;
  /** `count` per-edge arrays, contents undefined, shared by every caller of the workspace. */
  roundScratch(count: number): Float64Array[] {
    const n = this.r.length;
    if (!this.roundBlock || this.roundBlock.length < count * n) this.roundBlock = new Float64Array(count * n);
    const block = this.roundBlock;
    return Array.from({ length: count }, (_, i) => block.subarray(i * n, (i + 1) * n));
  }
  private store = new Float64Array(0);
  constructor(n: number) {
    this.resize(n);
  }
  /** Makes the per-edge arrays views of n entries (r, slope, curvature: n; jac, jp: 4n). */
  resize(n: number): void {
    if (this.store.length < 11 * n) this.store = new Float64Array(11 * n);
    const s = this.store;
    this.r = s.subarray(0, n);
    this.jac = s.subarray(n, 5 * n);
    this.slope = s.subarray(5 * n, 6 * n);
    this.curvature = s.subarray(6 * n, 7 * n);
    this.jp = s.subarray(7 * n, 11 * n);
  }
}

/** Captures up to this many edges share one kept workspace (about 2 MB of buffers at most). */
const KEPT_WORKSPACE_EDGES = 10_000;
let kept: FitWorkspace | null = null;

/**
 * The workspace for one capture of n edges: the one kept from the last capture when n is at most
 * KEPT_WORKSPACE_EDGES (so that a loop of analyses allocates its buffers once), else a new one.
 * The analysis is synchronous and never holds two captures' workspaces at once.
 */
export function captureWorkspace(n: number): FitWorkspace {
  if (n > KEPT_WORKSPACE_EDGES) return new FitWorkspace(n);
  if (kept) kept.resize(n);
  else kept = new FitWorkspace(n);
  return kept;
}

/** How one fit runs (fitEdgeModel), besides its edges, start, weights and workspace. */
export interface EdgeFitOptions {
  /** Rising and falling thresholds, volts. */
  vh_v: number;
  vl_v: number;
  /** Each edge's timing variance for the residuals' second-order term, s^2 (null: none). */
  timingVar_s2: Float64Array | null;
  limits: FitLimits | null;
  /** At most this many accepted steps (default 60). */
  maxIterations?: number;
  /** Stopping tolerance in chi2 (default 1e-6). */
  tolChi2?: number;
  /** ws.r and ws.jac already hold the model at the start: it is not evaluated there again. */
  reuseEvaluation?: boolean;
  /** Only edges with weight > 0 are evaluated (default: every indexed edge, weight zero
   *  included, so rejected edges can be re-tested). */
  weightedOnly?: boolean;
}

/**
 * Minimises sum w_k r_k^2 over the edges with w_k > 0 and finite m, starting at p0. Stops when a
 * step gains less than `tolChi2`, or when the quadratic model, having just predicted a step's
 * gain (within a factor 2), predicts less than `tolChi2` still to gain (chi2 is in units of the
 * noise model: the analysis's 1e-3 leaves the parameters within about 0.03 standard deviations
 * of the minimum, analyze-ring.ts FIT_TOL_CHI2).
 *
 * On return `fresh` says whether ws.r, ws.jac, ws.slope and ws.curvature belong to the returned p
 * (false only when the last evaluated trial step was refused).
 */
export function fitEdgeModel(
  e: EdgeSet, p0: ArrayLike<number>, w: Float64Array, ws: FitWorkspace, o: EdgeFitOptions,
): EdgeFitResult {
  const maxIterations = o.maxIterations ?? 60;
  const tolChi2 = o.tolChi2 ?? 1e-6;
  const limits = o.limits;
  const p = Float64Array.from(p0);
  ws.mask = o.weightedOnly ? w : null;
  let chi2 = o.reuseEvaluation
    ? sums(p, e, w, limits, ws, ws.h, ws.g)
    : accumulate(p, e, w, o, ws, ws.h, ws.g);
  let fresh = true;
  ws.hp1.set(ws.hp);
  ws.gp1.set(ws.gp);
  if (!Number.isFinite(chi2)) return { p, chi2, normal: ws.h.slice(), iterations: 0, converged: false, fresh };
  // Starts lightly damped: most fits start near their minimum (later rounds, short fits from
  // the profile's valley floor), where a Gauss-Newton step is what is wanted.
  let lambda = 1e-5;
  let converged = false;
  // The last accepted step gained what the quadratic model predicted (within a factor 2).
  let modelHolds = false;
  let it = 0;
  // ws.jp keeps the Jacobian at p for the geodesic acceleration (a trial overwrites ws.jac).
  ws.jp.set(ws.jac);
  for (; it < maxIterations && !converged; it++) {
    for (let i = 0; i < N_PARAMS * N_PARAMS; i++) ws.hs[i] = ws.h[i] + ws.hp1[i];
    for (let i = 0; i < N_PARAMS; i++) ws.gs[i] = -(ws.g[i] + ws.gp1[i]);
    centre(ws);
    // Once the last step's gain matched its quadratic model, the model's own remaining gain
    // (the Gauss-Newton decrement g^T H^-1 g: the chi2 the undamped step would gain, S. Boyd
    // and L. Vandenberghe, Convex Optimization, 2004, §9.5.1) is trusted: with less than the
    // tolerance left to gain the fit has converged, without evaluating a last step that could
    // only confirm it.
    if (modelHolds && solveDamped(N_PARAMS, ws.hs, ws.gs, 0, ws.step, ws.work)) {
      let decrement = 0;
      for (let i = 0; i < N_PARAMS; i++) decrement += ws.gs[i] * ws.step[i];
      if (decrement <= tolChi2) {
        converged = true;
        break;
      }
    }
    let accepted = false;
    while (lambda < 1e12) {
      if (!solveCentred(ws, ws.gs, lambda, ws.step)) {
        lambda = Math.max(lambda * 10, 1e-8);
        continue;
      }
      for (let i = 0; i < N_PARAMS; i++) ws.trial[i] = p[i] + ws.step[i];
      if (!accelerate(e, w, ws, lambda)) {
        lambda *= 8;
        continue;
      }
      // A trial whose soft-limit penalty alone exceeds chi2 at p cannot be accepted: refused
      // without evaluating the edges (ws.r and ws.jac still hold what they held; penalty() has
      // overwritten ws.hp and ws.gp, but the system at p uses the copies hp1 and gp1).
      if (penalty(ws.trial, limits, ws.hp, ws.gp) > chi2) {
        lambda *= 8;
        continue;
      }
      // The trial is evaluated with its Jacobian: most trials are accepted, and this saves
      // evaluating the accepted point twice.
      const trialChi2 = accumulate(ws.trial, e, w, o, ws, ws.h2, ws.g2);
      fresh = trialChi2 <= chi2;
      if (trialChi2 <= chi2) {
        const drop = chi2 - trialChi2;
        // The step taken, geodesic acceleration included, is what the model's prediction and the
        // small-step test must judge.
        for (let i = 0; i < N_PARAMS; i++) ws.step[i] = ws.trial[i] - p[i];
        converged = drop <= tolChi2 + 1e-12 * chi2 || smallStep(p, ws.step);
        const predicted = predictedGain(ws.hs, ws.gs, ws.step);
        modelHolds = drop >= MODEL_HOLDS_LO * predicted && drop <= MODEL_HOLDS_HI * predicted;
        p.set(ws.trial);
        ws.jp.set(ws.jac);
        ws.h.set(ws.h2);
        ws.g.set(ws.g2);
        ws.hp1.set(ws.hp);
        ws.gp1.set(ws.gp);
        chi2 = trialChi2;
        lambda = Math.max(lambda * 0.2, 1e-12);
        accepted = true;
        break;
      }
      lambda *= 8;
    }
    if (!accepted) {
      // No downhill step at machine precision: a minimum. ws.h still belongs to p.
      converged = true;
      break;
    }
  }
  return { p, chi2, normal: ws.h.slice(), iterations: it, converged, fresh };
}

/** Gain / predicted gain of an accepted step within which the quadratic model is trusted. */
const MODEL_HOLDS_LO = 0.5;
const MODEL_HOLDS_HI = 2;

/** chi2 gain the quadratic model predicts for the step s: 2 s.(-g) - s^T H s (gs = -g). */
function predictedGain(hs: Float64Array, gs: Float64Array, s: Float64Array): number {
  let gain = 0;
  for (let i = 0; i < N_PARAMS; i++) {
    let hsi = 0;
    for (let j = 0; j < N_PARAMS; j++) hsi += hs[i * N_PARAMS + j] * s[j];
    gain += 2 * gs[i] * s[i] - s[i] * hsi;
  }
  return gain;
}

/** The largest acceleration accepted relative to the step (M. K. Transtrum and J. P. Sethna,
 *  "Improvements to the Levenberg-Marquardt algorithm for nonlinear least-squares
 *  minimization", arXiv:1201.5885, 2012: alpha = 0.75). */
const GEODESIC_ALPHA = 0.75;

/**
 * Geodesic acceleration: adds a/2 to the trial step v (ws.trial = p + v on entry), where
 * a = -(J^T W J + lambda D)^-1 J^T W r'' and r'' is the second directional derivative of the
 * residuals along v. In a narrow curved valley this bends the step along the valley instead of
 * crawling. Returns false when the acceleration is too large against the step (the step should
 * shrink).
 *
 * r'' is exact and needs no model evaluation: the parameters enter each residual through two
 * combinations only, and the Jacobian at p (ws.jp) holds what their second derivatives need.
 * Phase form: r = S (wd t - m pi - phi - s asin(u)), u = V e^x, x = alpha t - ln A0; with
 * c = s u / sqrt(1 - u^2) (jac[2] = S c), d^2(s asin u)/dx^2 = c (1 + c^2), so
 * r'' = -S c (1 + c^2) (t v_alpha - v_lnA)^2 (beyond U_CONT, where asin continues linearly,
 * -S c (t v_alpha - v_lnA)^2). Level form: r = e^X sin Y - V, X = ln A0 - alpha t,
 * Y = wd t - phi; with v = jac[2] and a = -jac[1] (the ring and its quadrature at the edge),
 * r'' = v (dX^2 - dY^2) + 2 a dX dY, dX = v_lnA - t v_alpha, dY = t v_wd - v_phi. The
 * second-order noise correction in r (edge-model.ts) is left out, as in the Jacobian.
 */
function accelerate(e: EdgeSet, w: Float64Array, ws: FitWorkspace, lambda: number): boolean {
  const v = ws.step;
  const v0 = v[0], v1 = v[1], v2 = v[2], v3 = v[3];
  const { jp } = ws;
  const ms = e.m;
  const ts = e.t_s;
  const form = e.form;
  const scale = e.scale_v;
  let g0 = 0, g1 = 0, g2 = 0, g3 = 0;
  for (let k = 0; k < e.n; k++) {
    const wk = w[k];
    if (!(wk > 0) || ms[k] !== ms[k]) continue;
    const o = 4 * k;
    const t = ts[k];
    const dX = v2 - t * v3;
    let rpp: number;
    if (form[k] === 1) {
      const sc = scale[k];
      const c = jp[o + 2] / sc;
      const c2 = c * c;
      rpp = -sc * c * (c2 <= C2_CONT ? 1 + c2 : 1) * dX * dX;
    } else {
      const dY = t * v0 - v1;
      rpp = jp[o + 2] * (dX * dX - dY * dY) - 2 * jp[o + 1] * dX * dY;
    }
    if (rpp !== rpp) return false;
    const a = wk * rpp;
    g0 += a * jp[o]; g1 += a * jp[o + 1]; g2 += a * jp[o + 2]; g3 += a * jp[o + 3];
  }
  ws.ga[0] = -g0; ws.ga[1] = -g1; ws.ga[2] = -g2; ws.ga[3] = -g3;
  if (!solveCentred(ws, ws.ga, lambda, ws.acc)) return false;
  // Both measured in the centred coordinates the damping uses.
  toCentred(ws, v, ws.vc);
  toCentred(ws, ws.acc, ws.ac);
  let na = 0, nv = 0;
  for (let i = 0; i < N_PARAMS; i++) {
    const d = ws.hc[i * N_PARAMS + i];
    na += d * ws.ac[i] * ws.ac[i];
    nv += d * ws.vc[i] * ws.vc[i];
  }
  if (!(2 * Math.sqrt(na) <= GEODESIC_ALPHA * Math.sqrt(nv))) return false;
  for (let i = 0; i < N_PARAMS; i++) ws.trial[i] += 0.5 * ws.acc[i];
  return true;
}

/**
 * Centred coordinates for the damping. The edges pin down phase and log amplitude best near the
 * middle of the ring, not at t = 0, so phi and wd, and ln A0 and alpha, are strongly
 * correlated, and the diagonal of J^T W J that scales the damping measures phi and ln A0 at the
 * wrong time. In the coordinates phi' = phi - t1 wd and lnA' = ln A0 - t2 alpha, with t1 and t2
 * chosen so that the system has no phi'-wd and lnA'-alpha terms (the information-weighted mean
 * edge times: the same centring that decorrelates the intercept and slope of a straight-line
 * fit), the damping is Marquardt's diagonal in those coordinates: in the original ones it is a
 * general scaling matrix D^T D, which the method allows (J. J. Moré, "The Levenberg-Marquardt
 * algorithm: implementation and theory", Numerical Analysis, LNM 630, 1978, §2). The undamped
 * step is the same in any coordinates; the damped steps follow the correlated valleys instead of
 * the axes. Sets ws.tc and ws.hc = M^T ws.hs M, where p = M p' (phi = phi' + t1 wd,
 * ln A0 = lnA' + t2 alpha).
 */
function centre(ws: FitWorkspace): void {
  const h = ws.hs;
  const hc = ws.hc;
  const t1 = h[5] > 0 ? -h[1] / h[5] : 0;
  const t2 = h[10] > 0 ? -h[11] / h[10] : 0;
  ws.tc[0] = t1;
  ws.tc[1] = t2;
  // H M: column 0 gains t1 times column 1, column 3 gains t2 times column 2.
  for (let i = 0; i < N_PARAMS; i++) {
    const o = i * N_PARAMS;
    hc[o] = h[o] + t1 * h[o + 1];
    hc[o + 1] = h[o + 1];
    hc[o + 2] = h[o + 2];
    hc[o + 3] = h[o + 3] + t2 * h[o + 2];
  }
  // M^T (H M): row 0 gains t1 times row 1, row 3 gains t2 times row 2.
  for (let j = 0; j < N_PARAMS; j++) {
    hc[j] += t1 * hc[N_PARAMS + j];
    hc[3 * N_PARAMS + j] += t2 * hc[2 * N_PARAMS + j];
  }
}

/** Solves (H + lambda diag(H)) x = b in the centred coordinates of `centre`; x in the original
 *  ones. */
function solveCentred(ws: FitWorkspace, b: Float64Array, lambda: number, x: Float64Array): boolean {
  const t1 = ws.tc[0], t2 = ws.tc[1];
  // b' = M^T b
  ws.bc[0] = b[0] + t1 * b[1];
  ws.bc[1] = b[1];
  ws.bc[2] = b[2];
  ws.bc[3] = b[3] + t2 * b[2];
  if (!solveDamped(N_PARAMS, ws.hc, ws.bc, lambda, x, ws.work)) return false;
  // x = M x'
  x[1] += t1 * x[0];
  x[2] += t2 * x[3];
  return true;
}

/** x' = M^-1 x: a step in the centred coordinates of `centre`. */
function toCentred(ws: FitWorkspace, x: Float64Array, out: Float64Array): void {
  out[0] = x[0];
  out[1] = x[1] - ws.tc[0] * x[0];
  out[2] = x[2] - ws.tc[1] * x[3];
  out[3] = x[3];
}

/** Relative parameter steps at the level of double rounding: nothing left to gain. */
function smallStep(p: Float64Array, step: Float64Array): boolean {
  const wd = Math.abs(p[0]);
  return (
    Math.abs(step[0]) <= 1e-14 * wd && Math.abs(step[1]) <= 1e-12 &&
    Math.abs(step[2]) <= 1e-12 && Math.abs(step[3]) <= 1e-14 * wd
  );
}

/** chi2 at p, with J^T W J into h and J^T W r into g. */
function accumulate(
  p: Float64Array, e: EdgeSet, w: Float64Array, o: EdgeFitOptions, ws: FitWorkspace, h: Float64Array, g: Float64Array,
): number {
  evaluateEdges(p, e, o.vh_v, o.vl_v, ws.mask, o.timingVar_s2, { r: ws.r, jac: ws.jac, slope: ws.slope, curvature: ws.curvature });
  return sums(p, e, w, o.limits, ws, h, g);
}

/** chi2 and the normal equations from the residuals and Jacobian already in ws. */
function sums(
  p: Float64Array, e: EdgeSet, w: Float64Array, limits: FitLimits | null, ws: FitWorkspace,
  h: Float64Array, g: Float64Array,
): number {
  const pen = penalty(p, limits, ws.hp, ws.gp);
  const { r, jac } = ws;
  const ms = e.m;
  let chi2 = 0;
  let h00 = 0, h01 = 0, h02 = 0, h03 = 0, h11 = 0, h12 = 0, h13 = 0, h22 = 0, h23 = 0, h33 = 0;
  let g0 = 0, g1 = 0, g2 = 0, g3 = 0;
  for (let k = 0; k < e.n; k++) {
    const wk = w[k];
    if (!(wk > 0) || ms[k] !== ms[k]) continue;
    const rk = r[k];
    if (rk !== rk) return Infinity;
    chi2 += wk * rk * rk;
    const o = 4 * k;
    const j0 = jac[o], j1 = jac[o + 1], j2 = jac[o + 2], j3 = jac[o + 3];
    const a0 = wk * j0, a1 = wk * j1, a2 = wk * j2, a3 = wk * j3;
    h00 += a0 * j0; h01 += a0 * j1; h02 += a0 * j2; h03 += a0 * j3;
    h11 += a1 * j1; h12 += a1 * j2; h13 += a1 * j3;
    h22 += a2 * j2; h23 += a2 * j3; h33 += a3 * j3;
    g0 += a0 * rk; g1 += a1 * rk; g2 += a2 * rk; g3 += a3 * rk;
  }
  h[0] = h00; h[1] = h01; h[2] = h02; h[3] = h03;
  h[4] = h01; h[5] = h11; h[6] = h12; h[7] = h13;
  h[8] = h02; h[9] = h12; h[10] = h22; h[11] = h23;
  h[12] = h03; h[13] = h13; h[14] = h23; h[15] = h33;
  g[0] = g0; g[1] = g1; g[2] = g2; g[3] = g3;
  return chi2 + pen;
}

/**
 * The soft limits' chi2 at p; their J^T J and J^T r go into hp and gp (zero inside the limits).
 * Scale: one unit of chi2 per 0.01 beyond e_max or a_max, per 1e-6 of decay below alpha_min.
 */
function penalty(p: Float64Array, limits: FitLimits | null, hp: Float64Array, gp: Float64Array): number {
  hp.fill(0);
  gp.fill(0);
  if (!limits) return 0;
  let chi2 = 0;
  const tl = limits.t_last_s;
  const overEnd = p[P_LNA] - p[P_ALPHA] * tl - limits.ln_v_stop - limits.e_max;
  if (overEnd > 0) {
    const r = 100 * overEnd;
    chi2 += r * r;
    hp[10] += 1e4; hp[11] += -1e4 * tl; hp[14] += -1e4 * tl; hp[15] += 1e4 * tl * tl;
    gp[2] += 100 * r; gp[3] += -100 * tl * r;
  }
  const overStart = p[P_LNA] - limits.ln_v_stop - limits.a_max;
  if (overStart > 0) {
    const r = 100 * overStart;
    chi2 += r * r;
    hp[10] += 1e4;
    gp[2] += 100 * r;
  }
  if (limits.t_next_s !== undefined && limits.ln_v_next !== undefined) {
    let tn = limits.t_next_s;
    let overNext = p[P_LNA] - p[P_ALPHA] * tn - limits.ln_v_next - 0.05;
    if (limits.t_next2_s !== undefined && limits.ln_v_next2 !== undefined) {
      const over2 = p[P_LNA] - p[P_ALPHA] * limits.t_next2_s - limits.ln_v_next2 - 0.05;
      if (over2 < overNext) {
        overNext = over2;
        tn = limits.t_next2_s;
      }
    }
    if (overNext > 0) {
      const r = 100 * overNext;
      chi2 += r * r;
      hp[10] += 1e4; hp[11] += -1e4 * tn; hp[14] += -1e4 * tn; hp[15] += 1e4 * tn * tn;
      gp[2] += 100 * r; gp[3] += -100 * tn * r;
    }
  }
  const under = limits.alpha_min - p[P_ALPHA];
  if (under > 0) {
    const sc = 1e6 * tl;
    const r = sc * under;
    chi2 += r * r;
    hp[15] += sc * sc;
    gp[3] += -sc * r;
  }
  return chi2;
}
