// The decay's profile likelihood, for uncertainties that hold where the fit's linearisation does
// not (docs/method.md §5). With symmetric thresholds the amplitude shows only through the
// asin(V/A(t)) delays, which grow as the ring decays, so the frequency the edges imply depends on
// the decay the fit settles at, and by how much depends on that decay too: a fit whose decay came
// out fast also finds less coupling at itself and reports a smaller U(L) exactly where L is off
// (the k = 2 intervals covered 77-91 % of the benchmark's seeds on such rings). The likelihood is
// profiled along alpha (the other three ring parameters refitted by a few Gauss-Newton steps at
// each fixed alpha), over +-PROFILE_SPAN_SD of its sd, and each quantity's variance becomes the
// larger of the linearised one and (its variance at fixed alpha) + (the likelihood-weighted
// spread of its exact values along the profile about the reported one): the law of total
// variance over alpha, integrated numerically.

import { evaluateEdges, P_ALPHA, P_WD, type EdgeSet } from "./edge-model.ts";
import { invertSymmetric } from "./small-linear-algebra.ts";

/** The profile's span and step, in sd of alpha (the fit's). */
export const PROFILE_SPAN_SD = 2.5;
const PROFILE_STEP_SD = 0.5;
/** Gauss-Newton steps of the other parameters at each alpha (from the neighbouring point). */
const PROFILE_STEPS = 2;
/**
 * Profiled only where the decay is this poorly known (sd of alpha over alpha; U(Q) above 10 % of
 * Q, where Q_UNCERTAIN is raised): where it is known better, the coupling hardly changes over its
 * uncertainty (on the benchmark's grid the profile moved no such point's coverage by more than
 * a percent), and the profile costs about 30 model evaluations per edge.
 */
export const PROFILE_MIN_REL = 0.05;
/** ... and on captures of up to this many edges: a longer ring pins its decay down (on the
 *  benchmark's grid no longer point gained from it) and the cost grows with the edges. */
export const PROFILE_MAX_EDGES = 400;

export interface ProfileFit {
  edges: EdgeSet;
  p: Float64Array;
  cov: Float64Array;
  used: Float64Array;
  variance: Float64Array;
  vh_v: number;
  vl_v: number;
}

/** One point of the profile: the ring parameters, and the weight (sums to 1). */
export interface ProfilePoint {
  wd: number;
  alpha: number;
  w: number;
}

/** The other three parameters refitted at p's alpha; returns chi2 (NaN on failure). */
function refit(f: ProfileFit, p: Float64Array, r: Float64Array, jac: Float64Array): number {
  const n = f.edges.n;
  const free = [0, 1, 2, 3].filter((i) => i !== P_ALPHA);
  let chi2 = NaN;
  for (let it = 0; it <= PROFILE_STEPS; it++) {
    r.fill(0);
    jac.fill(0);
    evaluateEdges(p, f.edges, f.vh_v, f.vl_v, f.used, null, { r, jac });
    const N = new Float64Array(9);
    const g = new Float64Array(3);
    chi2 = 0;
    for (let k = 0; k < n; k++) {
      if (!(f.used[k] > 0)) continue;
      const w = 1 / f.variance[k];
      if (!(w > 0) || !Number.isFinite(w) || !Number.isFinite(r[k])) continue;
      chi2 += w * r[k] * r[k];
      for (let a = 0; a < 3; a++) {
        const ja = jac[4 * k + free[a]];
        g[a] += w * ja * r[k];
        for (let b = 0; b < 3; b++) N[3 * a + b] += w * ja * jac[4 * k + free[b]];
      }
    }
    if (it === PROFILE_STEPS) break;
    const Ni = invertSymmetric(3, N);
    if (!Ni) return NaN;
    for (let a = 0; a < 3; a++) {
      let d = 0;
      for (let b = 0; b < 3; b++) d -= Ni[3 * a + b] * g[b];
      p[free[a]] += d;
    }
  }
  return chi2;
}

/** The profile along alpha about the fit (null when it cannot be formed). */
export function decayProfile(f: ProfileFit): ProfilePoint[] | null {
  const sa = Math.sqrt(f.cov[5 * P_ALPHA]);
  if (f.edges.n > PROFILE_MAX_EDGES || !(sa > 0) || !Number.isFinite(sa) || !(sa >= PROFILE_MIN_REL * f.p[P_ALPHA])) return null;
  const n = f.edges.n;
  const r = new Float64Array(n);
  const jac = new Float64Array(4 * n);
  const pts: { p: Float64Array; chi2: number }[] = [];
  for (const dir of [-1, 1]) {
    const p = f.p.slice();
    for (let z = dir < 0 ? 0 : PROFILE_STEP_SD; z <= PROFILE_SPAN_SD + 1e-9; z += PROFILE_STEP_SD) {
      // Start from the neighbouring point moved along the fit's regression on alpha.
      const step = z === 0 ? 0 : PROFILE_STEP_SD;
      for (let i = 0; i < 4; i++) p[i] += (dir * step * f.cov[4 * i + P_ALPHA]) / sa;
      p[P_ALPHA] = f.p[P_ALPHA] + dir * z * sa;
      if (!(p[P_ALPHA] > 0)) break;
      const chi2 = refit(f, p, r, jac);
      if (!Number.isFinite(chi2)) break;
      pts.push({ p: p.slice(), chi2 });
    }
  }
  if (pts.length < 5) return null;
  const best = Math.min(...pts.map((q) => q.chi2));
  const w = pts.map((q) => Math.exp(-0.5 * (q.chi2 - best)));
  const sw = w.reduce((a, b) => a + b, 0);
  return pts.map((q, j) => ({ wd: q.p[P_WD], alpha: q.p[P_ALPHA], w: w[j] / sw }));
}
