// The fit-only uncertainty a predicted ring would give (pure): the Cramér-Rao bound of
// analysis/cramer-rao.ts for the ring A0 e^(-alpha t) sin(wd t) and its exact threshold crossings,
// computed in one pass without building an edge list, and remembered for inputs seen before (a
// setting whose prediction did not change between readings is not worked out again).
//
// The crossings are those of docs/method.md §2 as the comparator makes them (rising through VH,
// falling through VL, starting low, ending where an extremum no longer reaches its threshold),
// each solved by Newton's method from the zero crossing it follows, inside its monotonic stretch.
// The Fisher information is the level-crossing form of the analysis's edge model at the true
// parameters: per edge J = (t A cos, -A cos, v, -t v) for (wd, phi, ln A0, alpha) and variance
// sigma_v^2 + slope^2 (tick^2 / 12 + sigma_t^2) (S. M. Kay, Fundamentals of Statistical Signal
// Processing: Estimation Theory, 1993, §3.9).

import { ringQuantities } from "../analysis/ring-quantities.ts";
import { invertSymmetric } from "../analysis/small-linear-algebra.ts";

export interface RingBoundInput {
  a0_v: number;
  alpha_per_s: number;
  wd_rad_s: number;
  tank_c_f: number;
  /** Rising and falling thresholds, volts. */
  vh_v: number;
  vl_v: number;
  /** The capture stops after this many edges (the tester's buffer). */
  max_edges: number;
  tick_hz: number;
  sigma_t_s: number;
  sigma_v_v: number;
}

export interface PredictedBound {
  /** Standard relative uncertainties of L and Q from the fit alone (Infinity: too few edges). */
  l_rel: number;
  q_rel: number;
  edges: number;
}

/** Work done by the ranging predictions since the process started (for the benchmark). */
export const rangingWork = { predictions: 0, bounds_computed: 0, bounds_reused: 0, edges_solved: 0 };

/** Bounds remembered, most recent last; a reading's ranging predicts at most 16 settings a step. */
const CACHE_SIZE = 64;
const cache = new Map<string, PredictedBound>();

/** The fit-only bound for a predicted ring, from the cache when these inputs were seen before. */
export function predictedRingBound(b: RingBoundInput): PredictedBound {
  const key = `${b.a0_v}|${b.alpha_per_s}|${b.wd_rad_s}|${b.tank_c_f}|${b.vh_v}|${b.vl_v}|${b.max_edges}|${b.tick_hz}|${b.sigma_t_s}|${b.sigma_v_v}`;
  const hit = cache.get(key);
  if (hit) {
    rangingWork.bounds_reused++;
    cache.delete(key);
    cache.set(key, hit);
    return hit;
  }
  rangingWork.bounds_computed++;
  const r = computeBound(b);
  if (cache.size >= CACHE_SIZE) cache.delete(cache.keys().next().value!);
  cache.set(key, r);
  return r;
}

/** Window the crossings are looked for in, s (as the bound's edge list always was). */
const WINDOW_S = 1e3;
const NONE: PredictedBound = { l_rel: Infinity, q_rel: Infinity, edges: 0 };

function computeBound(b: RingBoundInput): PredictedBound {
  const { a0_v: a0, alpha_per_s: alpha, wd_rad_s: wd, vh_v: vh, vl_v: vl } = b;
  const varT = 1 / (b.tick_hz * b.tick_hz * 12) + b.sigma_t_s ** 2;
  const sv2 = b.sigma_v_v ** 2;
  // Fisher information, upper triangle of the symmetric 4 x 4 matrix.
  let f00 = 0, f01 = 0, f02 = 0, f03 = 0, f11 = 0, f12 = 0, f13 = 0, f22 = 0, f23 = 0, f33 = 0;
  let edges = 0;
  // Stretch n runs from extremum n-1 to extremum n (even n climbs to a maximum); extremum n
  // of e^(-alpha t) sin(wd t) is at wd t = atan2(wd, alpha) + n pi.
  const base = Math.atan2(wd, alpha);
  let high = false;
  let segStart = 0;
  let vStart = 0;
  for (let n = 0; edges < b.max_edges; n++) {
    const segEnd = (base + n * Math.PI) / wd;
    if (segStart > WINDOW_S) break;
    const climbing = n % 2 === 0;
    const vEnd = a0 * Math.exp(-alpha * segEnd) * Math.sin(wd * segEnd);
    if (climbing !== high) {
      const level = climbing ? vh : vl;
      const reaches = climbing ? vEnd > level : vEnd < level;
      const before = climbing ? vStart <= level : vStart >= level;
      if (reaches && before) {
        const t = solveCrossing(a0, alpha, wd, level, segStart, segEnd, n);
        if (t > WINDOW_S) break;
        const amp = a0 * Math.exp(-alpha * t);
        const x = wd * t;
        const v = amp * Math.sin(x);
        const ac = amp * Math.cos(x);
        const slope = wd * ac - alpha * v;
        const w = 1 / (sv2 + slope * slope * varT);
        const j0 = ac * t, j1 = -ac, j2 = v, j3 = -t * v;
        f00 += j0 * j0 * w; f01 += j0 * j1 * w; f02 += j0 * j2 * w; f03 += j0 * j3 * w;
        f11 += j1 * j1 * w; f12 += j1 * j2 * w; f13 += j1 * j3 * w;
        f22 += j2 * j2 * w; f23 += j2 * j3 * w; f33 += j3 * j3 * w;
        edges++;
        high = climbing;
      } else if (!reaches && (n > 1 || !climbing)) break; // the ring no longer reaches the threshold
    }
    segStart = segEnd;
    vStart = vEnd;
  }
  rangingWork.edges_solved += edges;
  if (edges < 6) return { ...NONE, edges };
  const cov = invertSymmetric(4, Float64Array.of(f00, f01, f02, f03, f01, f11, f12, f13, f02, f12, f22, f23, f03, f13, f23, f33));
  if (!cov) return { ...NONE, edges };
  const rq = ringQuantities(wd, alpha, [cov[0], cov[3], cov[15]], b.tank_c_f, 0, 0);
  return { l_rel: rq.u.inductance_h / rq.inductance_h, q_rel: rq.u.q / rq.q, edges };
}

/**
 * Where a0 e^(-alpha t) sin(wd t) crosses `level` inside [lo, hi] (monotonic there, the level
 * between its ends): Newton's method from the crossing's first-order position next to the zero
 * at wd t = n pi, kept inside the bracket, to 1e-14 relative.
 */
function solveCrossing(a0: number, alpha: number, wd: number, level: number, lo: number, hi: number, n: number): number {
  const tz = (n * Math.PI) / wd;
  const u = level / (a0 * Math.exp(-alpha * tz));
  let t = Math.abs(u) < 1 ? (n * Math.PI + (n % 2 === 0 ? 1 : -1) * Math.asin(u)) / wd : 0.5 * (lo + hi);
  if (!(t > lo && t < hi)) t = 0.5 * (lo + hi);
  let flo = a0 * Math.exp(-alpha * lo) * Math.sin(wd * lo) - level;
  for (let i = 0; i < 200; i++) {
    const e = a0 * Math.exp(-alpha * t);
    const s = Math.sin(wd * t);
    const ft = e * s - level;
    if (ft === 0) return t;
    if (Math.sign(ft) === Math.sign(flo)) {
      lo = t;
      flo = ft;
    } else {
      hi = t;
    }
    let next = t - ft / (e * (wd * Math.cos(wd * t) - alpha * s));
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - t) <= 1e-14 * t || hi - lo <= 4e-16 * hi) return next;
    t = next;
  }
  return t;
}
