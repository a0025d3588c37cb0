// Starting point for the edge-model fit. The likelihood in (A0, alpha) has several basins
// (measurement notes §2), so the start is found globally: for every (A0, alpha) on a grid the
// model is linear in (wd, phi) (u depends only on the observed times), so those two follow in
// closed form and the grid point is scored by its time residuals. The grid is laid out in
// robust features of the ring: D = alpha * t_last, the log-decay across the capture, and
// E = ln(A(t_last) / V_stop), how far the ring still is from the threshold that ends it at
// the last edge (E near 0: the ring ended inside the capture; large E: capture truncated).

import { P_ALPHA, P_LNA, P_PHI, P_WD, type EdgeSet } from "./edge-model.ts";

const D_GRID = logGrid(1e-3, 14, 14);
const E_GRID = logGrid(1e-4, 10, 11);
const MAX_SAMPLE = 40;
const TAIL_SAMPLE = 14;

export interface InitialGuess {
  p: Float64Array;
  /** Mean squared time residual of the grid point, s^2. */
  ms_residual_s2: number;
}

/**
 * Grid search over (D, E). Returns the grid's local minima (lower than their eight neighbours),
 * best first, at most `max_candidates`; empty when no grid point explains the edges. Several
 * are returned because the valley in (A0, alpha) is narrow and curved: a coarse grid can rank a
 * point in a false basin above one beside the true minimum, which a short fit then separates.
 */
export function initialCandidates(e: EdgeSet, vh_v: number, vl_v: number, max_candidates = 3): InitialGuess[] {
  const sample = pickSample(e);
  const n = sample.length;
  if (n < 4) return [];
  const t = new Float64Array(n);
  const level = new Float64Array(n);
  const base = new Float64Array(n); // m pi
  const sign = new Float64Array(n);
  const grow = new Float64Array(n); // V e^(alpha t) for the current alpha
  for (let j = 0; j < n; j++) {
    const k = sample[j];
    const rise = e.rising[k] === 1;
    t[j] = e.t_s[k];
    level[j] = rise ? vh_v : vl_v;
    base[j] = e.m[k] * Math.PI;
    sign[j] = rise ? 1 : -1;
  }
  const tLast = t[n - 1];
  const vStop = Math.max(vh_v, -vl_v, 1e-300);
  const nd = D_GRID.length;
  const ne = E_GRID.length;
  const cost = new Float64Array(nd * ne);
  const wdAt = new Float64Array(nd * ne);
  const phiAt = new Float64Array(nd * ne);
  const fit = { wd: 0, phi: 0 };
  const psi = new Float64Array(n);
  for (let i = 0; i < nd; i++) {
    const alpha = D_GRID[i] / tLast;
    for (let j = 0; j < n; j++) grow[j] = level[j] * Math.exp(alpha * t[j]);
    for (let j = 0; j < ne; j++) {
      const lnA = Math.log(vStop) + E_GRID[j] + D_GRID[i];
      const c = profileCost(t, base, sign, grow, Math.exp(-lnA), psi, fit);
      cost[i * ne + j] = c;
      wdAt[i * ne + j] = fit.wd;
      phiAt[i * ne + j] = fit.phi;
    }
  }
  const minima: number[] = [];
  for (let i = 0; i < nd; i++) {
    for (let j = 0; j < ne; j++) {
      const c = cost[i * ne + j];
      if (!Number.isFinite(c) || !(wdAt[i * ne + j] > 0)) continue;
      let lowest = true;
      for (let di = -1; di <= 1 && lowest; di++) {
        for (let dj = -1; dj <= 1; dj++) {
          const ii = i + di;
          const jj = j + dj;
          if ((di === 0 && dj === 0) || ii < 0 || jj < 0 || ii >= nd || jj >= ne) continue;
          if (cost[ii * ne + jj] < c) {
            lowest = false;
            break;
          }
        }
      }
      if (lowest) minima.push(i * ne + j);
    }
  }
  minima.sort((x, y) => cost[x] - cost[y]);
  return minima.slice(0, max_candidates).map((g) => {
    const i = Math.floor(g / ne);
    const j = g % ne;
    const p = new Float64Array(4);
    p[P_WD] = wdAt[g];
    p[P_PHI] = phiAt[g];
    p[P_LNA] = Math.log(vStop) + E_GRID[j] + D_GRID[i];
    p[P_ALPHA] = D_GRID[i] / tLast;
    return { p, ms_residual_s2: cost[g] / n };
  });
}

/**
 * Sum of squared time residuals with (wd, phi) solved by least squares in phase, for fixed
 * amplitude (u_j = grow_j / A0). Edges the model cannot reach are scored as if at the peak
 * (u clamped to 1), which keeps the score continuous across the feasibility boundary.
 */
function profileCost(
  t: Float64Array, base: Float64Array, sign: Float64Array, grow: Float64Array, invA0: number,
  psi: Float64Array, out: { wd: number; phi: number },
): number {
  const n = t.length;
  let st = 0, sp = 0, stt = 0, stp = 0;
  for (let j = 0; j < n; j++) {
    let u = grow[j] * invA0;
    if (u > 1) u = 1;
    else if (u < -1) u = -1;
    const ps = base[j] + sign[j] * Math.asin(u);
    const tj = t[j];
    psi[j] = ps;
    st += tj;
    sp += ps;
    stt += tj * tj;
    stp += tj * ps;
  }
  const det = n * stt - st * st;
  if (!(det > 0)) return Infinity;
  const wd = (n * stp - st * sp) / det;
  const phi = (wd * st - sp) / n;
  if (!(wd > 0)) return Infinity;
  let cost = 0;
  for (let j = 0; j < n; j++) {
    const res = wd * t[j] - phi - psi[j];
    cost += res * res;
  }
  out.wd = wd;
  out.phi = phi;
  return cost / (wd * wd);
}



/** Up to 40 edges with an index: the last 14 (they carry the amplitude) and the rest spread. */
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
