// First pass of cycle bookkeeping: give every edge a half-cycle index m (2k rising, 2k+1 falling)
// from the edge times alone, before any model exists. Rising and falling edges are counted
// separately by walking through each: consecutive edges of one level lie round(dt/T) cycles
// apart. A walk never accumulates period error (each step rounds a short interval), so it
// survives a rough period, dropped edges (a gap of two cycles) and chatter (a step of zero
// cycles, i.e. two edges in one half-cycle). The model fit later re-checks every index.

import { REASON_DUPLICATE } from "./model-bookkeeping.ts";
import { median } from "./robust-stats.ts";

export interface HalfCycleAssignment {
  /** Half-cycle index per edge; NaN where this pass rejected the edge. */
  m: Float64Array;
  /** Period from straight lines through each level's edges, seconds (NaN: no period found). */
  period_s: number;
  /** Why an edge was rejected here (null: kept). */
  reasons: (string | null)[];
}

export function assignHalfCycles(t_s: Float64Array, rising: Uint8Array): HalfCycleAssignment {
  const n = t_s.length;
  const m = new Float64Array(n).fill(NaN);
  const reasons: (string | null)[] = new Array(n).fill(null);
  const t0 = roughPeriod(t_s, rising);
  if (!(t0 > 0)) return { m, period_s: NaN, reasons };
  const keep = dropChatter(t_s, rising, t0, reasons);
  const up = indicesOf(rising, 1, keep);
  const down = indicesOf(rising, 0, keep);

  // Two walks: the second uses the period of straight lines through the first walk's indices.
  let kUp = walk(t_s, up, t0);
  let kDown = walk(t_s, down, t0);
  const lineUp = robustLine(t_s, up, kUp, t0);
  const lineDown = robustLine(t_s, down, kDown, t0);
  const period = combinePeriods(lineUp, lineDown, up.length, down.length, t0);
  kUp = walk(t_s, up, period);
  kDown = walk(t_s, down, period);
  const fitUp = robustLine(t_s, up, kUp, period);
  const fitDown = robustLine(t_s, down, kDown, period);

  // Falling edge k follows rising edge k within one period (its high time lies in (0, T)).
  const shift = fallingShift(t_s, up, kUp, down, kDown, period);
  for (let j = 0; j < up.length; j++) m[up[j]] = 2 * kUp[j];
  for (let j = 0; j < down.length; j++) m[down[j]] = 2 * (kDown[j] + shift) + 1;
  dropDuplicates(t_s, up, kUp, fitUp, period, m, reasons);
  dropDuplicates(t_s, down, kDown, fitDown, period, m, reasons);
  return { m, period_s: period, reasons };
}

function indicesOf(rising: Uint8Array, level: number, keep: Uint8Array): Int32Array {
  let c = 0;
  for (let i = 0; i < rising.length; i++) if (rising[i] === level && keep[i]) c++;
  const out = new Int32Array(c);
  c = 0;
  for (let i = 0; i < rising.length; i++) if (rising[i] === level && keep[i]) out[c++] = i;
  return out;
}

/**
 * Chatter: a real edge X followed within half a period by an opposite and a same edge (X, X', X)
 * cannot be a ring, whose X' and next X are a whole period apart. Such pairs are set aside before
 * counting; at 10-20 ticks per period they would otherwise subdivide intervals enough to make
 * the walk slip a cycle. (The model pass re-examines them.)
 */
function dropChatter(t: Float64Array, rising: Uint8Array, period: number, reasons: (string | null)[]): Uint8Array {
  const n = t.length;
  const keep = new Uint8Array(n).fill(1);
  let last = -1;
  let j = 0;
  while (j < n) {
    if (last >= 0 && j + 1 < n && rising[j] !== rising[last] && rising[j + 1] === rising[last] && t[j + 1] - t[last] < 0.5 * period) {
      keep[j] = 0;
      keep[j + 1] = 0;
      reasons[j] = "chatter: opposite and same edge right after an edge";
      reasons[j + 1] = reasons[j];
      j += 2;
      continue;
    }
    last = j;
    j++;
  }
  return keep;
}

/** Median interval between consecutive edges of one level (both levels pooled). */
function roughPeriod(t: Float64Array, rising: Uint8Array): number {
  const d = new Float64Array(t.length);
  const last = [-1, -1];
  let c = 0;
  for (let i = 0; i < t.length; i++) {
    const level = rising[i];
    const prev = last[level];
    last[level] = i;
    if (prev < 0) continue;
    const dt = t[i] - t[prev];
    if (dt > 0) d[c++] = dt;
  }
  if (c === 0) return NaN;
  // The medians select in place (d is scratch; its order does not matter).
  const t0 = median(d, c, d);
  // Chatter adds short intervals and dropped edges long ones; re-take the median of the
  // intervals that look like one or two whole periods, scaled to one.
  let c2 = 0;
  for (let j = 0; j < c; j++) {
    const ratio = Math.round(d[j] / t0);
    if (ratio >= 1 && ratio <= 3 && Math.abs(d[j] / t0 - ratio) < 0.25) d[c2++] = d[j] / ratio;
  }
  return c2 > 0 ? median(d, c2, d) : t0;
}

function walk(t: Float64Array, idx: Int32Array, period: number): Float64Array {
  const k = new Float64Array(idx.length);
  for (let j = 1; j < idx.length; j++) k[j] = k[j - 1] + Math.round((t[idx[j]] - t[idx[j - 1]]) / period);
  return k;
}

interface Line {
  a: number;
  b: number;
  n: number;
}

/** t = a + b k by least squares, twice dropping edges more than a quarter period off. */
function robustLine(t: Float64Array, idx: Int32Array, k: Float64Array, period: number): Line | null {
  if (idx.length < 2) return null;
  let a = 0;
  let b = period;
  let tol = Infinity;
  let used = 0;
  for (let pass = 0; pass < 3; pass++) {
    let s0 = 0, sk = 0, st = 0, skk = 0, skt = 0;
    for (let j = 0; j < idx.length; j++) {
      const tj = t[idx[j]];
      if (Math.abs(tj - a - b * k[j]) > tol) continue;
      s0++;
      sk += k[j];
      st += tj;
      skk += k[j] * k[j];
      skt += k[j] * tj;
    }
    const det = s0 * skk - sk * sk;
    if (s0 < 2 || !(det > 0)) break;
    b = (s0 * skt - sk * st) / det;
    a = (st - b * sk) / s0;
    used = s0;
    tol = 0.25 * period;
  }
  return used >= 2 ? { a, b, n: used } : null;
}

function combinePeriods(up: Line | null, down: Line | null, nUp: number, nDown: number, t0: number): number {
  const ok = (l: Line | null) => l !== null && l.b > 0.5 * t0 && l.b < 2 * t0;
  if (ok(up) && ok(down)) return (up!.b * nUp + down!.b * nDown) / (nUp + nDown);
  if (ok(up)) return up!.b;
  if (ok(down)) return down!.b;
  return t0;
}

/** Index shift that puts each falling edge in the cycle of the rising edge before it (median). */
function fallingShift(
  t: Float64Array, up: Int32Array, kUp: Float64Array, down: Int32Array, kDown: Float64Array, period: number,
): number {
  const shifts = new Float64Array(down.length);
  let c = 0;
  let i = -1;
  for (let j = 0; j < down.length; j++) {
    const tj = t[down[j]];
    while (i + 1 < up.length && t[up[i + 1]] <= tj) i++;
    if (i >= 0 && tj - t[up[i]] < period) shifts[c++] = kUp[i] - kDown[j];
  }
  return c > 0 ? Math.round(median(shifts, c, shifts)) : 0;
}

/** Two edges of one level in one half-cycle: keep the one nearer the level's straight line. */
function dropDuplicates(
  t: Float64Array, idx: Int32Array, k: Float64Array, line: Line | null, period: number,
  m: Float64Array, reasons: (string | null)[],
): void {
  const a = line ? line.a : 0;
  const b = line ? line.b : period;
  let j = 0;
  while (j < idx.length) {
    let end = j + 1;
    while (end < idx.length && k[end] === k[j]) end++;
    if (end - j > 1) {
      let best = j;
      for (let d = j + 1; d < end; d++) {
        if (Math.abs(t[idx[d]] - a - b * k[d]) < Math.abs(t[idx[best]] - a - b * k[best])) best = d;
      }
      for (let d = j; d < end; d++) {
        if (d === best) continue;
        m[idx[d]] = NaN;
        reasons[idx[d]] = REASON_DUPLICATE;
      }
    }
    j = end;
  }
}
