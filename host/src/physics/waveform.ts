// A waveform at the comparator input (volts against seconds since the switch opened) as the
// physical comparator model consumes it: value and slope anywhere, plus bounds that let the
// comparator jump over stretches the ring cannot cross. Two implementations: the closed-form
// ring (ring-wave.ts) and a piecewise cubic through knots (sampled transients, the integrated
// nonlinear ring).

import type { DampedSine } from "./ring.ts";
import type { RingWave } from "./ring-wave.ts";
import { sineWave, waveAmplitude, waveExtremum } from "./ring-wave.ts";

export interface Waveform {
  value(t_s: number): number;
  /** dv/dt, V/s. */
  slope(t_s: number): number;
  /** An upper bound of |v(t)| for all t >= t_s (lets the simulator skip quiet stretches). */
  amplitudeAfter(t_s: number): number;
  /** No edges after this, seconds. */
  end_s: number;
  /**
   * Optional: the first time >= t_s at which v reaches level_v from below (direction 1) or from
   * above (direction -1), or a lower bound of it; Infinity when it never does. Without it the
   * comparator steps through the waveform finely.
   */
  nextReach?(t_s: number, level_v: number, direction: 1 | -1): number;
  /** Optional: an upper bound of |d2v/dt2| for all t >= t_s (guards the crossing search). */
  curvatureAfter?(t_s: number): number;
}

/** The closed-form ring (or the plain damped sine) as a Waveform. */
export function waveformOfRing(r: RingWave | DampedSine, end_s = Infinity): Waveform {
  const w: RingWave = "a0_v" in r ? sineWave(r.a0_v, r.alpha_per_s, r.wd_rad_s) : r;
  const a = waveAmplitude(w);
  const off = Math.abs(w.offset_v ?? 0);
  const fastS = Math.abs(w.s_v);
  const lam = w.lambda3_per_s;
  const w0sq = w.alpha_per_s ** 2 + w.wd_rad_s ** 2;
  const fast = (t: number, power: number) => (fastS === 0 ? 0 : lam < 0 ? fastS * Math.abs(lam) ** power * Math.exp(lam * t) : Infinity);
  // Stretch k runs from extremum k-1 to extremum k, monotonic in the oscillating part; extremum
  // k is a maximum when k is even (ring-wave.ts waveExtremum), so even stretches climb.
  const base = waveExtremum(w, 0) * w.wd_rad_s;
  const ext = (k: number) => waveExtremum(w, k);
  const climbs = (k: number) => k % 2 === 0;
  const envelope = (t: number) => off + a * Math.exp(-w.alpha_per_s * t) + fast(t, 0);
  // The hot path: value and slope with the ring's constants captured (no property lookups).
  const { alpha_per_s: al, wd_rad_s: wd, p_v: pv, q_v: qv, s_v: sv, lambda3_per_s: l3 } = w;
  const o = w.offset_v ?? 0;
  const dc = -al * pv + wd * qv;
  const ds = -al * qv - wd * pv;
  const value = sv === 0
    ? (t: number) => Math.exp(-al * t) * (pv * Math.cos(wd * t) + qv * Math.sin(wd * t)) + o
    : (t: number) => Math.exp(-al * t) * (pv * Math.cos(wd * t) + qv * Math.sin(wd * t)) + sv * Math.exp(l3 * t) + o;
  const slope = sv === 0
    ? (t: number) => Math.exp(-al * t) * (dc * Math.cos(wd * t) + ds * Math.sin(wd * t))
    : (t: number) => Math.exp(-al * t) * (dc * Math.cos(wd * t) + ds * Math.sin(wd * t)) + sv * l3 * Math.exp(l3 * t);
  return {
    end_s,
    value,
    slope,
    amplitudeAfter: envelope,
    curvatureAfter: (t) => a * w0sq * Math.exp(-w.alpha_per_s * t) + fast(t, 2),
    nextReach(t, level, dir) {
      if (dir * (value(t) - level) >= 0) return t;
      // The stretch containing t: the first extremum after t closes it.
      let k = Math.floor((w.wd_rad_s * t - base) / Math.PI) + 1;
      while (ext(k) <= t) k++;
      while (ext(k - 1) > t) k--;
      for (let guard = 0; guard < 1_000_000; guard++, k++) {
        const lo = Math.max(t, ext(k - 1));
        const hi = ext(k);
        if (lo >= end_s) return Infinity;
        if (climbs(k) === (dir === 1) && dir * (value(hi) - level) >= 0) return rootOf(value, slope, level, lo, hi);
        // Once even the envelope stays on this side of the level, it is never reached.
        const env = envelope(hi);
        if (dir === 1 ? env < level : -env > level) return Infinity;
      }
      return Infinity;
    },
  };
}

/** Root of v(t) = level inside [lo, hi] where v - level changes sign: Newton guarded by bisection. */
function rootOf(value: (t: number) => number, slope: (t: number) => number, level: number, lo: number, hi: number): number {
  const f = (t: number) => value(t) - level;
  let flo = f(lo);
  if (flo === 0) return lo;
  let t = 0.5 * (lo + hi);
  for (let i = 0; i < 200; i++) {
    const ft = f(t);
    if (ft === 0) return t;
    if (Math.sign(ft) === Math.sign(flo)) {
      lo = t;
      flo = ft;
    } else {
      hi = t;
    }
    let next = t - ft / slope(t);
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - t) <= 1e-16 * Math.max(t, 1e-12) || hi - lo <= 4e-16 * hi) return next;
    t = next;
  }
  return t;
}

/**
 * A piecewise cubic Hermite waveform through knots (t_k, v_k, dv/dt_k), strictly increasing t.
 * Per-interval bounds (exact extremes of each cubic, of its slope, of its curvature) are turned
 * into suffix maxima, so the bounds "for all t >= t_s" are one lookup.
 */
export function piecewiseCubicWaveform(t: Float64Array, v: Float64Array, d: Float64Array): Waveform {
  const n = t.length;
  if (n < 2) throw new RangeError("a waveform needs at least two knots");
  const m = n - 1;
  const absAfter = new Float64Array(m + 1);
  const curvAfter = new Float64Array(m + 1);
  const lo = new Float64Array(m);
  const hi = new Float64Array(m);
  for (let i = 0; i < m; i++) {
    const [a, b] = intervalRange(t, v, d, i);
    lo[i] = a;
    hi[i] = b;
  }
  for (let i = m - 1; i >= 0; i--) {
    const h = t[i + 1] - t[i];
    // p'' is linear in each interval: its extremes are at the ends.
    const c0 = (6 * (v[i + 1] - v[i])) / (h * h) - (4 * d[i] + 2 * d[i + 1]) / h;
    const c1 = (-6 * (v[i + 1] - v[i])) / (h * h) + (2 * d[i] + 4 * d[i + 1]) / h;
    absAfter[i] = Math.max(absAfter[i + 1], Math.abs(lo[i]), Math.abs(hi[i]));
    curvAfter[i] = Math.max(curvAfter[i + 1], Math.abs(c0), Math.abs(c1));
  }
  let cursor = 0;
  const find = (x: number) => {
    // Queries move forward almost always: search from the last interval found; a step back
    // (a bridge midpoint, another comparator level) bisects the earlier knots.
    if (x < t[cursor]) {
      let a = 0, b = cursor;
      while (b - a > 1) {
        const c = (a + b) >> 1;
        if (t[c] <= x) a = c;
        else b = c;
      }
      cursor = a;
    }
    while (cursor < m - 1 && x >= t[cursor + 1]) cursor++;
    return cursor;
  };
  const value = (x: number) => {
    const i = find(x);
    return hermiteAt(t, v, d, i, x);
  };
  const slope = (x: number) => {
    const i = find(x);
    return hermiteSlopeAt(t, v, d, i, x);
  };
  return {
    end_s: t[m],
    value,
    slope,
    amplitudeAfter: (x) => (x >= t[m] ? 0 : absAfter[find(Math.max(x, t[0]))]),
    curvatureAfter: (x) => (x >= t[m] ? 0 : curvAfter[find(Math.max(x, t[0]))]),
    nextReach(x, level, dir) {
      if (x >= t[m]) return Infinity;
      const start = Math.max(x, t[0]);
      if (dir * (value(start) - level) >= 0) return start;
      for (let i = find(start); i < m; i++) {
        if (dir === 1 ? hi[i] < level : lo[i] > level) continue;
        // Reached inside this interval: scan its monotonic pieces for the first sign change.
        const a = Math.max(start, t[i]);
        const pts = [a, ...slopeRoots(t, v, d, i).filter((r) => r > a), t[i + 1]];
        for (let k = 0; k + 1 < pts.length; k++) {
          const fb = hermiteAt(t, v, d, i, pts[k + 1]) - level;
          if (dir * fb >= 0) return bisect((y) => hermiteAt(t, v, d, i, y) - level, pts[k], pts[k + 1], dir);
        }
      }
      return Infinity;
    },
  };
}

function hermiteAt(t: Float64Array, v: Float64Array, d: Float64Array, i: number, x: number): number {
  const h = t[i + 1] - t[i];
  const s = (x - t[i]) / h;
  const s2 = s * s;
  const s3 = s2 * s;
  return (2 * s3 - 3 * s2 + 1) * v[i] + (s3 - 2 * s2 + s) * h * d[i] + (-2 * s3 + 3 * s2) * v[i + 1] + (s3 - s2) * h * d[i + 1];
}

function hermiteSlopeAt(t: Float64Array, v: Float64Array, d: Float64Array, i: number, x: number): number {
  const h = t[i + 1] - t[i];
  const s = (x - t[i]) / h;
  const s2 = s * s;
  return ((6 * s2 - 6 * s) * (v[i] - v[i + 1])) / h + (3 * s2 - 4 * s + 1) * d[i] + (3 * s2 - 2 * s) * d[i + 1];
}

/** Times inside interval i where the cubic's slope is zero (0, 1 or 2 of them). */
function slopeRoots(t: Float64Array, v: Float64Array, d: Float64Array, i: number): number[] {
  const h = t[i + 1] - t[i];
  const dv = (v[i] - v[i + 1]) / h;
  // p'(s) = A s^2 + B s + C in the unit variable s.
  const A = 6 * dv + 3 * d[i] + 3 * d[i + 1];
  const B = -6 * dv - 4 * d[i] - 2 * d[i + 1];
  const C = d[i];
  const out: number[] = [];
  if (Math.abs(A) < 1e-300) {
    if (B !== 0) out.push(-C / B);
  } else {
    const disc = B * B - 4 * A * C;
    if (disc >= 0) {
      const q = -0.5 * (B + Math.sign(B || 1) * Math.sqrt(disc));
      out.push(q / A);
      if (q !== 0) out.push(C / q);
    }
  }
  return out.filter((s) => s > 0 && s < 1).sort((x, y) => x - y).map((s) => t[i] + s * h);
}

function intervalRange(t: Float64Array, v: Float64Array, d: Float64Array, i: number): [number, number] {
  let a = Math.min(v[i], v[i + 1]);
  let b = Math.max(v[i], v[i + 1]);
  for (const r of slopeRoots(t, v, d, i)) {
    const y = hermiteAt(t, v, d, i, r);
    a = Math.min(a, y);
    b = Math.max(b, y);
  }
  return [a, b];
}

/** First point in [lo, hi] where dir * f >= 0, f monotonic there with dir * f(hi) >= 0. */
function bisect(f: (x: number) => number, lo: number, hi: number, dir: number): number {
  for (let k = 0; k < 200 && hi - lo > 1e-15 * Math.max(Math.abs(hi), 1e-12); k++) {
    const mid = 0.5 * (lo + hi);
    if (dir * f(mid) >= 0) hi = mid;
    else lo = mid;
  }
  return hi;
}

/**
 * A sampled waveform (an ngspice transient, say) through a natural cubic spline: C2, fourth-order
 * accurate between samples. Repeated or backward time points are dropped.
 */
export function splineWaveform(times_s: ArrayLike<number>, values_v: ArrayLike<number>): Waveform {
  const tt: number[] = [];
  const vv: number[] = [];
  for (let i = 0; i < times_s.length; i++) {
    if (tt.length > 0 && !(times_s[i] > tt[tt.length - 1])) continue;
    tt.push(times_s[i]);
    vv.push(values_v[i]);
  }
  const n = tt.length;
  if (n < 2) throw new RangeError("a sampled waveform needs at least two distinct time points");
  // Natural spline: solve for the second derivatives M (tridiagonal, Thomas algorithm).
  const M = new Float64Array(n);
  if (n > 2) {
    const c = new Float64Array(n);
    const r = new Float64Array(n);
    for (let i = 1; i < n - 1; i++) {
      const h0 = tt[i] - tt[i - 1];
      const h1 = tt[i + 1] - tt[i];
      const rhs = 6 * ((vv[i + 1] - vv[i]) / h1 - (vv[i] - vv[i - 1]) / h0);
      const diag = 2 * (h0 + h1) - h0 * c[i - 1];
      c[i] = h1 / diag;
      r[i] = (rhs - h0 * r[i - 1]) / diag;
    }
    for (let i = n - 2; i >= 1; i--) M[i] = r[i] - c[i] * M[i + 1];
  }
  const t = Float64Array.from(tt);
  const v = Float64Array.from(vv);
  const d = new Float64Array(n);
  for (let i = 0; i < n - 1; i++) {
    const h = t[i + 1] - t[i];
    d[i] = (v[i + 1] - v[i]) / h - (h * (2 * M[i] + M[i + 1])) / 6;
  }
  const hl = t[n - 1] - t[n - 2];
  d[n - 1] = (v[n - 1] - v[n - 2]) / hl + (hl * (M[n - 2] + 2 * M[n - 1])) / 6;
  return piecewiseCubicWaveform(t, v, d);
}
