// How far the ring's frequency moves between its first and its last edge, for the saturation
// judgement (part-fault.ts). The analysis's drift test (analysis/diagnostics.ts) asks only
// whether the frequency moves, with one term linear in the amplitude, over the edges the fit
// kept; a core near saturation bends the first cycles hardest, and those are the edges the fit
// sets aside, so that figure understates the swing several times over.
//
// Here the frequency is f(t) = fd (1 + c1 a + c2 a² + c3 a³), a = A(t)/A0 = e^(-alpha t): a
// power series in the ring's amplitude, enough for a smooth L(i) (a differential inductance
// falling with current). Its phase adds wd sum c_j (1 - e^(-j alpha t)) / (j alpha) to the
// edge model; the c_j are fitted jointly with the ring's four parameters by one weighted
// Gauss-Newton step from the fitted point, over every edge with a half-cycle index, the
// rejected ones included. The swing is f(t_last)/f(t_first) - 1, and since L ∝ 1/f² the
// inductance swings by twice that (docs/method.md §1). Pure.

import type { FitState } from "../analysis/analyze-ring.ts";
import { P_ALPHA, P_WD } from "../analysis/edge-model.ts";
import { invertSymmetric } from "../analysis/small-linear-algebra.ts";

const TERMS = 3;
const N = 4 + TERMS;

/** Relative frequency change from the first to the last edge (negative: it falls), or undefined. */
export function frequencySwing(s: FitState): number | undefined {
  const { edges: e, p } = s;
  const wd = p[P_WD];
  const alpha = p[P_ALPHA];
  if (!(alpha > 0)) return undefined;
  const h = new Float64Array(N * N);
  const g = new Float64Array(N);
  const row = new Float64Array(N);
  let tFirst = Infinity;
  let tLast = 0;
  let n = 0;
  for (let k = 0; k < e.n; k++) {
    const r = s.r[k];
    const v = s.variance[k];
    if (!(r === r) || !(v > 0) || e.m[k] !== e.m[k]) continue;
    const t = e.t_s[k];
    const j0 = s.jac[4 * k];
    for (let i = 0; i < 4; i++) row[i] = s.jac[4 * k + i];
    for (let j = 1; j <= TERMS; j++) row[3 + j] = (j0 * wd * -Math.expm1(-j * alpha * t)) / (j * alpha * t);
    const w = 1 / v;
    for (let a = 0; a < N; a++) {
      g[a] += w * row[a] * r;
      for (let b = 0; b < N; b++) h[a * N + b] += w * row[a] * row[b];
    }
    tFirst = Math.min(tFirst, t);
    tLast = Math.max(tLast, t);
    n++;
  }
  if (n < 4 * N) return undefined;
  const hi = invertSymmetric(N, h);
  if (!hi) return undefined;
  // Newton step -H^-1 g: the frequency law's coefficients are its last TERMS entries.
  const at = (t: number) => {
    let d = 0;
    for (let j = 1; j <= TERMS; j++) {
      let c = 0;
      for (let b = 0; b < N; b++) c -= hi[(3 + j) * N + b] * g[b];
      d += c * Math.exp(-j * alpha * t);
    }
    return d;
  };
  const swing = (1 + at(tLast)) / (1 + at(tFirst)) - 1;
  return Number.isFinite(swing) ? swing : undefined;
}
