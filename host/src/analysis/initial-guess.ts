// Starting point for the edge-model fit. The likelihood in (A0, alpha) has several basins
// (measurement notes §2), so the start is found globally: for every (A0, alpha) on a grid the
// model is linear in (wd, phi) (u depends only on the observed times), so those two follow in
// closed form and the grid point is scored by its time residuals. The grid is laid out in
// robust features of the ring: D = alpha * t_last, the log-decay across the capture, and
// E = ln(A(t_last) / V_stop), how far the ring still is from the threshold that ends it at
// the last edge (E near 0: the ring ended inside the capture; large E: capture truncated).

import { P_ALPHA, P_LNA, P_PHI, P_WD, type EdgeSet } from "./edge-model.ts";

const D_GRID = logGrid(1e-3, 14, 18);
const E_GRID = logGrid(1e-4, 10, 13);
const MAX_SAMPLE = 48;
const TAIL_SAMPLE = 16;

export interface InitialGuess {
  p: Float64Array;
  /** Mean squared time residual of the best grid point, s^2. */
  ms_residual_s2: number;
}

/** Grid search over (D, E); returns null when no grid point explains the edges. */
export function initialGuess(e: EdgeSet, vh_v: number, vl_v: number): InitialGuess | null {
  const sample = pickSample(e);
  if (sample.length < 4) return null;
  const tLast = e.t_s[sample[sample.length - 1]];
  const vStop = Math.max(vh_v, -vl_v, 1e-300);
  const best = { cost: Infinity, lnA: 0, alpha: 0, wd: 0, phi: 0 };
  const fit = { wd: 0, phi: 0 };
  for (const d of D_GRID) {
    const alpha = d / tLast;
    for (const eFar of E_GRID) {
      const lnA = Math.log(vStop) + eFar + d;
      const cost = profileCost(e, sample, vh_v, vl_v, lnA, alpha, fit);
      if (cost < best.cost) Object.assign(best, { cost, lnA, alpha, wd: fit.wd, phi: fit.phi });
    }
  }
  if (!Number.isFinite(best.cost) || !(best.wd > 0)) return null;
  const p = new Float64Array(4);
  p[P_WD] = best.wd;
  p[P_PHI] = best.phi;
  p[P_LNA] = best.lnA;
  p[P_ALPHA] = best.alpha;
  return { p, ms_residual_s2: best.cost / sample.length };
}

/**
 * Sum of squared time residuals with (wd, phi) solved by least squares in phase, for fixed
 * (ln A0, alpha). Edges the model cannot reach are scored as if at the threshold's peak
 * (u clamped to 1), which keeps the score continuous across the feasibility boundary.
 */
export function profileCost(
  e: EdgeSet, sample: ArrayLike<number>, vh_v: number, vl_v: number, lnA: number, alpha: number,
  out: { wd: number; phi: number },
): number {
  const invA0 = Math.exp(-lnA);
  const n = sample.length;
  let st = 0, sp = 0, stt = 0, stp = 0;
  const psi = PSI.length >= n ? PSI : (PSI = new Float64Array(n));
  for (let j = 0; j < n; j++) {
    const k = sample[j];
    const rise = e.rising[k] === 1;
    let u = (rise ? vh_v : vl_v) * invA0 * Math.exp(alpha * e.t_s[k]);
    if (u > 1) u = 1;
    else if (u < -1) u = -1;
    const ps = e.m[k] * Math.PI + (rise ? 1 : -1) * Math.asin(u);
    const t = e.t_s[k];
    psi[j] = ps;
    st += t;
    sp += ps;
    stt += t * t;
    stp += t * ps;
  }
  const det = n * stt - st * st;
  if (!(det > 0)) return Infinity;
  const wd = (n * stp - st * sp) / det;
  const phi = (wd * st - sp) / n;
  if (!(wd > 0)) return Infinity;
  let cost = 0;
  for (let j = 0; j < n; j++) {
    const res = wd * e.t_s[sample[j]] - phi - psi[j];
    cost += res * res;
  }
  out.wd = wd;
  out.phi = phi;
  return cost / (wd * wd);
}

let PSI = new Float64Array(MAX_SAMPLE);

/** Up to 48 edges with an index: the last 16 (they carry the amplitude) and the rest spread. */
export function pickSample(e: EdgeSet): Int32Array {
  const active: number[] = [];
  for (let k = 0; k < e.n; k++) if (e.m[k] === e.m[k]) active.push(k);
  if (active.length <= MAX_SAMPLE) return Int32Array.from(active);
  const out = new Int32Array(MAX_SAMPLE);
  const head = MAX_SAMPLE - TAIL_SAMPLE;
  const headSpan = active.length - TAIL_SAMPLE;
  for (let j = 0; j < head; j++) out[j] = active[Math.floor((j * headSpan) / head)];
  for (let j = 0; j < TAIL_SAMPLE; j++) out[head + j] = active[headSpan + j];
  return out;
}

function logGrid(lo: number, hi: number, n: number): number[] {
  const out: number[] = [];
  for (let i = 0; i < n; i++) out.push(lo * Math.pow(hi / lo, i / (n - 1)));
  return out;
}
