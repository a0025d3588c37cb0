// Starting points for the edge-model fit. The likelihood in (A0, alpha) has several basins
// (docs/method.md §2), so the start is found globally. For fixed (A0, alpha) the model is
// linear in (wd, phi) (u depends only on the observed times), so those two follow in closed
// form (variable projection: G. H. Golub and V. Pereyra, SIAM J. Numer. Anal. 10(2), 1973).
// The search is laid out in robust features of the ring: D = alpha * t_last, the log-decay
// across the capture, and E = ln(A(t_last) / V_stop), how far the ring still is from the
// threshold that ends it (E near 0: the ring ended inside the capture; large E: truncated).
//
// The valley of the cost runs along E(D) and is very narrow across it (with symmetric thresholds
// and a truncated capture a grid step of 6 % in E misses the floor by orders of magnitude), so E
// is not gridded: for each D on a grid it is minimised by Gauss-Newton on ln A0, and the local
// minima of the resulting profile over D are the candidates.

import { P_ALPHA, P_LNA, P_PHI, P_WD, type EdgeSet } from "./edge-model.ts";

const D_GRID = logGrid(1e-3, 14, 20);
const E_START = [1e-3, 0.1, 3];
const MAX_SAMPLE = 40;
const TAIL_SAMPLE = 14;
const U_MAX = 1 - 1e-9;

export interface InitialGuess {
  p: Float64Array;
  /** Mean squared time residual at the start, s^2. */
  ms_residual_s2: number;
}

/** The sample's data, and scratch for the profile. */
interface Profile {
  n: number;
  t: Float64Array;
  tc: Float64Array; // t - mean(t)
  stt: number; // sum tc^2
  base: Float64Array; // m pi
  sign: Float64Array;
  grow: Float64Array; // V e^(alpha t) for the current alpha
  psi: Float64Array;
  dpsi: Float64Array;
  /** Spare psi and dpsi: a scan keeps its best point's in one pair while it tries the next. */
  psiSpare: Float64Array;
  dpsiSpare: Float64Array;
  r: Float64Array;
  dr: Float64Array;
  wd: number;
  phi: number;
}

/**
 * Candidate starts: the local minima over D of the cost minimised over E, best first, at most
 * `max_candidates` (with `shoulder`, a stand-in for a second basin when there is one minimum);
 * empty when nothing explains the edges.
 */
export function initialCandidates(e: EdgeSet, vh_v: number, vl_v: number, max_candidates = 3, shoulder = false): InitialGuess[] {
  const sample = pickSample(e);
  const n = sample.length;
  if (n < 4) return [];
  const pr = makeProfile(e, sample, vh_v, vl_v);
  const tLast = pr.t[n - 1];
  const lnStop = Math.log(Math.max(vh_v, -vl_v, 1e-300));
  const nd = D_GRID.length;
  const cost = new Float64Array(nd);
  const lnA = new Float64Array(nd);
  const wd = new Float64Array(nd);
  const phi = new Float64Array(nd);
  let lowest = Infinity;
  for (let i = 0; i < nd; i++) {
    // Warm start from the previous D with its E held (the valley's E(D) is smooth). Where the
    // warm start already costs no more than the lowest profile point so far, the valley is
    // still descending along D and the coarse scan in E is skipped: on the 500-edge throughput
    // captures this saved 31 of 136 cost evaluations per capture and moved no result by more
    // than 0.05 standard deviations (bench practice; a looser bound of 1.2x the lowest point
    // added spurious minima and cost more in the short fits than it saved here).
    const warm = i > 0 ? lnA[i - 1] + (D_GRID[i] - D_GRID[i - 1]) : NaN;
    const at = evaluateD(pr, D_GRID[i], tLast, vh_v, vl_v, lnStop, warm, true, lowest);
    if (at.cost < lowest) lowest = at.cost;
    cost[i] = at.cost;
    lnA[i] = at.lnA;
    wd[i] = at.wd;
    phi[i] = at.phi;
  }
  const minima: number[] = [];
  for (let i = 0; i < nd; i++) {
    if (!Number.isFinite(cost[i]) || !(wd[i] > 0)) continue;
    if ((i > 0 && cost[i - 1] < cost[i]) || (i + 1 < nd && cost[i + 1] < cost[i])) continue;
    minima.push(i);
  }
  minima.sort((x, y) => cost[x] - cost[y]);
  if (shoulder && minima.length === 1) {
    // One valley only: the best grid point at a decay at least twice or at most half the
    // minimum's stands in for the other basin, which noise may have flattened into a shoulder
    // (asked for on short captures, where the basins lie closest).
    let alt = -1;
    for (let i = 0; i < nd; i++) {
      if (!Number.isFinite(cost[i]) || !(wd[i] > 0)) continue;
      const ratio = D_GRID[i] / D_GRID[minima[0]];
      if (ratio < 2 && ratio > 0.5) continue;
      if (alt < 0 || cost[i] < cost[alt]) alt = i;
    }
    if (alt >= 0) minima.push(alt);
  }
  const out: InitialGuess[] = [];
  for (const i of minima.slice(0, max_candidates)) {
    // The valley floor lies between grid points: refine D by successive parabolic steps in
    // ln D (E re-minimised at each), so that the candidate's short fit starts on the floor.
    let best = { d: D_GRID[i], lnA: lnA[i], cost: cost[i], wd: wd[i], phi: phi[i] };
    let lo = Math.log(D_GRID[Math.max(0, i - 1)]);
    let hi = Math.log(D_GRID[Math.min(nd - 1, i + 1)]);
    let xs = [lo, Math.log(best.d), hi];
    let cs = [i > 0 ? cost[i - 1] : Infinity, best.cost, i + 1 < nd ? cost[i + 1] : Infinity];
    for (let it = 0; it < 4 && Number.isFinite(cs[0]) && Number.isFinite(cs[2]); it++) {
      const x = parabolaVertex(xs, cs);
      if (!(x > xs[0] && x < xs[2])) break;
      const d = Math.exp(x);
      const at = evaluateD(pr, d, tLast, vh_v, vl_v, lnStop, best.lnA + (d - best.d), false);
      if (at.cost < best.cost) {
        // Keep the bracket around the new best.
        if (x < xs[1]) {
          xs = [xs[0], x, xs[1]];
          cs = [cs[0], at.cost, cs[1]];
        } else {
          xs = [xs[1], x, xs[2]];
          cs = [cs[1], at.cost, cs[2]];
        }
        best = { d, lnA: at.lnA, cost: at.cost, wd: at.wd, phi: at.phi };
      } else if (x < xs[1]) {
        xs = [x, xs[1], xs[2]];
        cs = [at.cost, cs[1], cs[2]];
      } else {
        xs = [xs[0], xs[1], x];
        cs = [cs[0], cs[1], at.cost];
      }
    }
    const p = new Float64Array(4);
    p[P_WD] = best.wd;
    p[P_PHI] = best.phi;
    p[P_LNA] = best.lnA;
    p[P_ALPHA] = best.d / tLast;
    out.push({ p, ms_residual_s2: best.cost / (best.wd * best.wd * n) });
  }
  return out;
}

/**
 * The profile at one D: E from a warm start and/or a coarse scan, then Gauss-Newton. With
 * `scan`, the scan runs unless the warm start's cost is at or below `scanAbove`.
 */
function evaluateD(
  pr: Profile, d: number, tLast: number, vh_v: number, vl_v: number, lnStop: number, lnAStart: number,
  scan: boolean, scanAbove = -Infinity,
): { lnA: number; cost: number; wd: number; phi: number } {
  const alpha = d / tLast;
  for (let j = 0; j < pr.n; j++) pr.grow[j] = (pr.sign[j] > 0 ? vh_v : vl_v) * Math.exp(alpha * pr.t[j]);
  let bestL = NaN;
  let bestC = Infinity;
  let bestWd = NaN;
  let bestPhi = NaN;
  const tries = scan || !Number.isFinite(lnAStart) ? E_START.length : 0;
  for (let i = -1; i < tries; i++) {
    const l = i < 0 ? lnAStart : lnStop + E_START[i] + d;
    if (!Number.isFinite(l)) continue;
    // Evaluate into the spare buffers, so that pr.psi and pr.dpsi keep the best point's.
    swapSpare(pr);
    const c = projectedCost(pr, l);
    if (c < bestC) {
      bestC = c;
      bestL = l;
      bestWd = pr.wd;
      bestPhi = pr.phi;
    } else swapSpare(pr);
    if (i < 0 && c <= scanAbove) break;
  }
  if (!(bestC < Infinity)) return refineLnA(pr, bestL);
  pr.wd = bestWd;
  pr.phi = bestPhi;
  return refineLnA(pr, bestL, bestC);
}

function swapSpare(pr: Profile): void {
  const psi = pr.psi;
  const dpsi = pr.dpsi;
  pr.psi = pr.psiSpare;
  pr.dpsi = pr.dpsiSpare;
  pr.psiSpare = psi;
  pr.dpsiSpare = dpsi;
}

/** Abscissa of the vertex of the parabola through three points (x sorted). */
function parabolaVertex(x: number[], y: number[]): number {
  const d1 = (y[1] - y[0]) / (x[1] - x[0]);
  const d2 = (y[2] - y[1]) / (x[2] - x[1]);
  const curv = (d2 - d1) / (x[2] - x[0]);
  if (!(curv > 0)) return NaN;
  return 0.5 * (x[0] + x[1]) - d1 / (2 * curv);
}

function makeProfile(e: EdgeSet, sample: Int32Array, vh_v: number, vl_v: number): Profile {
  const n = sample.length;
  const pr: Profile = {
    n, t: new Float64Array(n), tc: new Float64Array(n), stt: 0, base: new Float64Array(n),
    sign: new Float64Array(n), grow: new Float64Array(n), psi: new Float64Array(n), dpsi: new Float64Array(n),
    psiSpare: new Float64Array(n), dpsiSpare: new Float64Array(n),
    r: new Float64Array(n), dr: new Float64Array(n), wd: 0, phi: 0,
  };
  let mean = 0;
  for (let j = 0; j < n; j++) {
    const k = sample[j];
    pr.t[j] = e.t_s[k];
    pr.base[j] = e.m[k] * Math.PI;
    pr.sign[j] = e.rising[k] === 1 ? 1 : -1;
    mean += pr.t[j];
  }
  mean /= n;
  for (let j = 0; j < n; j++) {
    pr.tc[j] = pr.t[j] - mean;
    pr.stt += pr.tc[j] * pr.tc[j];
  }
  void vh_v;
  void vl_v;
  return pr;
}

/**
 * Sum of squared phase residuals of psi_j = m pi + s asin(u_j), u_j = grow_j / A0, about the
 * best line wd t - phi (sets pr.wd, pr.phi), and d psi / d ln A0 into pr.dpsi. Edges the model
 * cannot reach are scored as if at the peak (u clamped).
 */
function projectedCost(pr: Profile, lnA: number): number {
  const inv = Math.exp(-lnA);
  const { n, psi, dpsi, grow, sign, base } = pr;
  let mean = 0;
  for (let j = 0; j < n; j++) {
    let u = grow[j] * inv;
    if (u > U_MAX) u = U_MAX;
    else if (u < -U_MAX) u = -U_MAX;
    psi[j] = base[j] + sign[j] * Math.asin(u);
    dpsi[j] = (-sign[j] * u) / Math.sqrt(1 - u * u);
    mean += psi[j];
  }
  mean /= n;
  let stp = 0;
  for (let j = 0; j < n; j++) stp += pr.tc[j] * psi[j];
  const slope = stp / pr.stt;
  let cost = 0;
  for (let j = 0; j < n; j++) {
    const res = psi[j] - mean - slope * pr.tc[j];
    cost += res * res;
  }
  pr.wd = slope;
  pr.phi = slope * (pr.t[0] - pr.tc[0]) - mean; // wd * mean(t) - mean(psi)
  return cost;
}

/**
 * Gauss-Newton on ln A0 of the projected phase residuals (variable projection, one nonlinear
 * parameter), with step halving; starts from lnA. With `cost0`, pr already holds that point
 * (its psi, dpsi, wd, phi and cost); otherwise it is evaluated here.
 */
function refineLnA(pr: Profile, lnA0: number, cost0?: number): { lnA: number; cost: number; wd: number; phi: number } {
  let lnA = lnA0;
  let cost = cost0 ?? projectedCost(pr, lnA);
  let wd = pr.wd;
  let phi = pr.phi;
  const { n, psi, dpsi, tc, r, dr } = pr;
  for (let it = 0; it < 6 && Number.isFinite(cost); it++) {
    // Project psi and its derivative off span{1, t}; the GN step of the 1-D problem.
    let mp = 0, md = 0, sp = 0, sd = 0;
    for (let j = 0; j < n; j++) {
      mp += psi[j];
      md += dpsi[j];
      sp += tc[j] * psi[j];
      sd += tc[j] * dpsi[j];
    }
    mp /= n;
    md /= n;
    sp /= pr.stt;
    sd /= pr.stt;
    let num = 0, den = 0;
    for (let j = 0; j < n; j++) {
      r[j] = psi[j] - mp - sp * tc[j];
      dr[j] = dpsi[j] - md - sd * tc[j];
      num += r[j] * dr[j];
      den += dr[j] * dr[j];
    }
    if (!(den > 0)) break;
    // The Gauss-Newton decrement num^2 / den is the decrease the linearised problem predicts
    // (S. Boyd and L. Vandenberghe, Convex Optimization, 2004, §9.5.1): below 1e-4 of the cost,
    // a step would gain too little to matter and is not tried (saves ~15 of ~105 cost
    // evaluations per 500-edge capture).
    if ((num * num) / den < 1e-4 * cost) break;
    let step = Math.max(-2, Math.min(2, -num / den));
    let accepted = false;
    for (let h = 0; h < 3; h++) {
      const c = projectedCost(pr, lnA + step);
      if (c < cost) {
        const gain = (cost - c) / cost;
        lnA += step;
        cost = c;
        wd = pr.wd;
        phi = pr.phi;
        accepted = gain > 1e-3;
        break;
      }
      step *= 0.5;
    }
    // Refused or negligible: pr may hold a trial point, so stop here with the kept values.
    if (!accepted) break;
  }
  return { lnA, cost, wd, phi };
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
