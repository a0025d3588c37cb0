// The comparator-edge model of docs/method.md §2 (derived from standard circuit theory): the
// ring v(t) = A0 e^(-alpha t) sin(wd t - phi) crosses the rising threshold VH upward at
//   wd t = 2 pi k + phi + asin(VH / A(t))
// and the falling threshold VL downward at
//   wd t = (2k+1) pi + phi - asin(VL / A(t)),   A(t) = A0 e^(-alpha t).
// With the half-cycle index m (even: rising, odd: falling) and s = (-1)^m both read
//   g(t) = wd t - m pi - phi - s asin(u(t)) = 0,   u(t) = V / A(t).
//
// Each edge is scored in one of two forms, chosen per fitting round (chooseResidualForms):
// - phase form, g(t_k) times a per-round constant S_k = A_k sqrt(1 - u_k^2): g is linear in the
//   edge's timing error (slope g_t), so weighted least squares on it is the time-domain fit the
//   notes describe, without solving for model crossing times and without a singularity where
//   g_t -> 0. Used wherever the ring clearly crosses the threshold.
// - level form, e_k = v(t_k) - V_k: smooth where the ring only grazes the threshold at its end
//   (no crossing time exists there, yet noise still makes edges). It is not used on ordinary
//   edges: t_k enters it nonlinearly, which biases the amplitude at second order in the noise.
// Both are in volts with slope_k = dv/dt at the crossing, so one variance model serves both. A
// timing error d of variance var_k gives r = slope d + curvature d^2 / 2; the mean
// curvature var_k / 2 is subtracted.

/** Parameter vector layout: [wd rad/s, phi rad, ln(A0 / 1 V), alpha 1/s]. */
export const P_WD = 0;
export const P_PHI = 1;
export const P_LNA = 2;
export const P_ALPHA = 3;
export const N_PARAMS = 4;

/** Edges with their half-cycle assignment. m is NaN for an edge that takes no part in a fit. */
export interface EdgeSet {
  n: number;
  t_s: Float64Array;
  /** Half-cycle index: 2k for the rising edge of cycle k, 2k+1 for its falling edge. */
  m: Float64Array;
  /** 1 for rising edges, 0 for falling. */
  rising: Uint8Array;
  /** Residual form per edge: 1 phase form, 0 level form. */
  form: Uint8Array;
  /** Phase-form scale S_k, volts per radian. */
  scale_v: Float64Array;
}

export function makeEdgeSet(t_s: Float64Array, rising: Uint8Array, m: Float64Array): EdgeSet {
  const n = t_s.length;
  return { n, t_s, m, rising, form: new Uint8Array(n), scale_v: new Float64Array(n) };
}

/** Where the per-edge outputs of `evaluateEdges` go; any may be omitted. */
export interface EdgeOutputs {
  /** Residual in volts (see the file comment), second-order corrected. */
  r?: Float64Array;
  /** d r / d p, row-major n x 4. */
  jac?: Float64Array;
  /** Residual per unit timing error (dv/dt at the crossing), V/s. */
  slope?: Float64Array;
  /** Residual per unit squared timing error, times two, V/s^2. */
  curvature?: Float64Array;
}

/**
 * Past |u| = U_CONT (a trial step, or a model that moved after the forms were chosen, puts the
 * envelope at or under an edge's threshold) the phase form continues asin linearly, with its
 * own slope: residual and Jacobian stay consistent, so the fit can walk back instead of
 * stalling on a clamped residual whose gradient is meaningless.
 */
const U_CONT = 0.9999;
const AS_CONT = Math.asin(U_CONT);
const INV_SQ_CONT = 1 / Math.sqrt(1 - U_CONT * U_CONT);
/** c^2 = u^2 / (1 - u^2) at |u| = U_CONT, c = jac[2] / S_k of a phase-form edge (edge-fit.ts). */
export const C2_CONT = (U_CONT * U_CONT) / (1 - U_CONT * U_CONT);

/**
 * Work count for the benchmark (docs/performance.md, `analysis.evaluations_per_capture`): per-edge
 * model evaluations by evaluateEdges since the process started, one per edge evaluated whatever
 * outputs were asked for. Internal: read with modelEvaluations(), not part of the public API.
 */
let evaluations = 0;

/** Per-edge model evaluations so far (the benchmark's work count; see `evaluations`). */
export function modelEvaluations(): number {
  return evaluations;
}

/**
 * Evaluates the model at every edge with a finite m and (if `mask` is given) mask[k] > 0.
 * `var_t_s2[k]` is edge k's timing variance for the second-order correction (null: none).
 */
export function evaluateEdges(
  p: ArrayLike<number>, e: EdgeSet, vh_v: number, vl_v: number,
  mask: Float64Array | null, var_t_s2: Float64Array | null, out: EdgeOutputs,
): void {
  const wd = p[P_WD];
  const phi = p[P_PHI];
  const a0 = Math.exp(p[P_LNA]);
  const invA0 = 1 / a0;
  const alpha = p[P_ALPHA];
  const r = out.r ?? null;
  const jac = out.jac ?? null;
  const slope = out.slope ?? null;
  const curvature = out.curvature ?? null;
  const c2 = alpha * alpha - wd * wd;
  const c1 = 2 * alpha * wd;
  const alpha2 = alpha * alpha;
  const ms = e.m;
  const ts = e.t_s;
  const rising = e.rising;
  const form = e.form;
  const scale = e.scale_v;
  const n = e.n;
  let count = 0;
  for (let k = 0; k < n; k++) {
    const m = ms[k];
    if (m !== m || (mask !== null && !(mask[k] > 0))) continue;
    count++;
    const t = ts[k];
    const rise = rising[k] === 1;
    const level = rise ? vh_v : vl_v;
    const vt = var_t_s2 !== null ? var_t_s2[k] : 0;
    if (form[k] === 1) {
      const u = level * invA0 * Math.exp(alpha * t);
      let invSq: number;
      let as: number;
      if (u <= U_CONT && u >= -U_CONT) {
        invSq = 1 / Math.sqrt(1 - u * u);
        as = Math.asin(u);
      } else {
        invSq = INV_SQ_CONT;
        as = u > 0 ? AS_CONT + (u - U_CONT) * INV_SQ_CONT : -AS_CONT + (u + U_CONT) * INV_SQ_CONT;
      }
      const c = (rise ? u : -u) * invSq;
      const gtt = -alpha2 * c * invSq * invSq;
      const sc = scale[k];
      if (r !== null) r[k] = sc * (wd * t - m * Math.PI - phi - (rise ? as : -as) - 0.5 * gtt * vt);
      if (jac !== null) {
        const o = 4 * k;
        jac[o] = sc * t;
        jac[o + 1] = -sc;
        jac[o + 2] = sc * c;
        jac[o + 3] = -sc * t * c;
      }
      if (slope !== null) slope[k] = sc * (wd - alpha * c);
      if (curvature !== null) curvature[k] = sc * gtt;
      continue;
    }
    const amp = a0 * Math.exp(-alpha * t);
    const x = wd * t - phi;
    const v = amp * Math.sin(x);
    const ac = amp * Math.cos(x);
    const vpp = c2 * v - c1 * ac;
    if (r !== null) r[k] = v - level - 0.5 * vpp * vt;
    if (jac !== null) {
      const o = 4 * k;
      jac[o] = ac * t;
      jac[o + 1] = -ac;
      jac[o + 2] = v;
      jac[o + 3] = -t * v;
    }
    if (slope !== null) slope[k] = wd * ac - alpha * v;
    if (curvature !== null) curvature[k] = vpp;
  }
  evaluations += count;
}

/**
 * Slope and curvature at p (as evaluateEdges gives them) of the edges WITHOUT a half-cycle index,
 * which evaluateEdges skips: neither needs the index, and the residual variance of such an edge
 * (noise-model.ts updateVariances), which decides duplicates when it is indexed again, then rests
 * on its own slope at the model rather than on whatever the output arrays held. `view` (n
 * entries) is scratch for the indices; returns how many edges were evaluated.
 */
export function evaluateUnindexed(
  p: ArrayLike<number>, e: EdgeSet, vh_v: number, vl_v: number, view: Float64Array,
  out: { slope: Float64Array; curvature: Float64Array },
): number {
  let count = 0;
  for (let k = 0; k < e.n; k++) {
    const none = e.m[k] !== e.m[k];
    // Any index serves: it enters the residual only, which is not asked for.
    view[k] = none ? 0 : NaN;
    if (none) count++;
  }
  if (count > 0) evaluateEdges(p, { ...e, m: view }, vh_v, vl_v, null, null, out);
  return count;
}

/**
 * Picks each edge's residual form at p: the phase form where the model ring crosses the
 * threshold cleanly (|u| < 0.98 and g_t > 0.3 wd), the level form where it grazes it. Sets the
 * phase-form scales S_k = A_k sqrt(1 - u_k^2) (the slope per unit phase).
 *
 * Only the last two cycles of each level may graze: the ring decays monotonically, so an edge
 * followed by edges of its level cycles later was a clean crossing whatever the model says.
 * This keeps a fit from lowering the envelope onto the threshold to make many edges "grazing"
 * (the level form is weakly sensitive to timing there) and so hide their timing.
 */
export function chooseResidualForms(
  p: ArrayLike<number>, e: EdgeSet, vh_v: number, vl_v: number, mask: Float64Array | null = null,
  amp_v: Float64Array | null = null,
): void {
  formsAt(p, e, vh_v, vl_v, true, mask, amp_v);
}

/** How many edges would change residual form if the forms were chosen again at p. */
export function formChanges(p: ArrayLike<number>, e: EdgeSet, vh_v: number, vl_v: number): number {
  return formsAt(p, e, vh_v, vl_v, false, null);
}

/** `mask`: only edges with mask[k] > 0 are looked at (null: all). `amp_v`: the model envelope
 *  A0 e^(-alpha t_k) at p when already at hand (reassignHalfCycles), else null. */
function formsAt(
  p: ArrayLike<number>, e: EdgeSet, vh_v: number, vl_v: number, apply: boolean, mask: Float64Array | null,
  amp_v: Float64Array | null = null,
): number {
  let changes = 0;
  const wd = p[P_WD];
  const a0 = Math.exp(p[P_LNA]);
  const alpha = p[P_ALPHA];
  const { n, m: ms, rising, t_s: ts, form, scale_v: scale } = e;
  let lastF = -Infinity, lastR = -Infinity;
  for (let k = 0; k < n; k++) {
    const m = ms[k];
    if (m !== m) continue;
    if (rising[k] === 1) lastR = Math.max(lastR, m);
    else lastF = Math.max(lastF, m);
  }
  for (let k = 0; k < n; k++) {
    if (mask !== null && !(mask[k] > 0)) continue;
    const m = ms[k];
    const rise = rising[k] === 1;
    const mayGraze = !(m < (rise ? lastR : lastF) - 4);
    // Only the scales need the model where an edge cannot graze: a count skips it.
    if (!apply && !mayGraze) {
      if (m === m && form[k] !== 1) changes++;
      continue;
    }
    const amp = amp_v !== null ? amp_v[k] : a0 * Math.exp(-alpha * ts[k]);
    const u = (rise ? vh_v : vl_v) / amp;
    const sq = Math.sqrt(Math.max(1 - u * u, 1e-6));
    let f = 1;
    if (mayGraze && (!(Math.abs(u) < 0.98) || !(wd - (alpha * (rise ? 1 : -1) * u) / sq > 0.3 * wd))) f = 0;
    if (m === m && f !== form[k]) changes++;
    if (!apply) continue;
    form[k] = f;
    scale[k] = amp * sq;
  }
  return changes;
}

/**
 * Model crossing time of half-cycle m (Newton on g), or NaN when the model ring no longer
 * reaches that threshold. Used to generate reference edges.
 */
export function modelEdgeTime(p: ArrayLike<number>, m: number, vh_v: number, vl_v: number): number {
  const wd = p[P_WD];
  const alpha = p[P_ALPHA];
  const invA0 = Math.exp(-p[P_LNA]);
  const rise = m % 2 === 0;
  const s = rise ? 1 : -1;
  const v = rise ? vh_v : vl_v;
  let t = (m * Math.PI + p[P_PHI]) / wd;
  for (let i = 0; i < 60; i++) {
    const u = v * invA0 * Math.exp(alpha * t);
    if (!(Math.abs(u) < 1)) return NaN;
    const sq = Math.sqrt(1 - u * u);
    const gt = wd - (alpha * s * u) / sq;
    if (!(gt > 0)) return NaN;
    const g = wd * t - m * Math.PI - p[P_PHI] - s * Math.asin(u);
    const step = g / gt;
    t -= step;
    if (Math.abs(step) <= 1e-15 * Math.abs(t)) break;
  }
  return t;
}
