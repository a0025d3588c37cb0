// Period bias on the noiseless reference ring of docs/method.md §2: f0 = 100 kHz (w0), Q = 50,
// A0 = 1 V, thresholds ±20 mV (±2 % of A0). Edges are exact crossings (host/src/sim), timed with
// 10 as ticks so that quantisation (5e-18 s on 5e-4 s) sits far below 1 ppm.
//
// Edge sets, stated exactly:
// - "A >= 2h": every edge, rising and falling, whose envelope A(t_k) = A0 e^(-alpha t_k) is at
//   least 2h = 40 mV: the first 103 edges (52 rising, 51 falling). All three estimators use them:
//   the model fit all 103; the line (fitLinePeriod) all 103, one slope pooled over both levels;
//   reciprocal counting (reciprocalPeriod) the first and the last rising edge of them (51 cycles).
//   A line through the 52 rising edges alone gives +1325.4 ppm, the notes' +1.325e-3.
// - Cut-off scan: the same ring cut after every edge count from 20 (10 cycles) to the ring's
//   end, for symmetric (±20 mV) and offset (+35/-5 mV) thresholds: a noiseless capture has a
//   single exact solution, so any model bias above 1 ppm is a fit that ended in a wrong basin.

import { analyzeRing, fitLinePeriod, reciprocalPeriod, type RingInput } from "../../../host/src/analysis/index.ts";
import { crossingTimes } from "../../../host/src/sim/comparator-edges.ts";

const W0 = 2 * Math.PI * 100e3;
const ALPHA = W0 / 100; // Q = w0 / (2 alpha) = 50
const WD = Math.sqrt(W0 * W0 - ALPHA * ALPHA);
const PERIOD_S = (2 * Math.PI) / WD; // the edges' period is the damped one
const TICK_HZ = 1e17;
const H_V = 0.02;

export interface ReferenceBias {
  edges: number;
  model_ppm: number;
  line_ppm: number;
  line_rising_ppm: number;
  reciprocal_ppm: number;
  /** Model on the whole ring, to where the maxima no longer reach the threshold. */
  model_full_ring_ppm: number;
  full_ring_edges: number;
}

export interface CutScan {
  cuts: number;
  /** Cut-offs where |model bias| > 1 ppm or the analysis failed. */
  bad: { edges: number; ppm: number; warnings: string }[];
  worst_ppm: number;
}

function ring(vh_v: number, vl_v: number) {
  return crossingTimes({ a0_v: 1, alpha_per_s: ALPHA, wd_rad_s: WD }, vh_v, vl_v, 100000, 1);
}

/** The first n edges; a capture cut short does not end on quiet, the whole ring does. */
function inputOf(times: number[], levels: number[], n: number, th: [number, number]): RingInput {
  const ticks = times.slice(0, n).map((t) => Math.round(t * TICK_HZ));
  return { tick_hz: TICK_HZ, ticks, levels: levels.slice(0, n), tank_c_f: 1e-9, thresholds_v: th, ring_ended: n === times.length };
}

const ppm = (period_s: number) => (period_s / PERIOD_S - 1) * 1e6;

export function referenceBias(): ReferenceBias {
  const th: [number, number] = [H_V, -H_V];
  const cr = ring(H_V, -H_V);
  const n = cr.times.filter((t) => Math.exp(-ALPHA * t) >= 2 * H_V).length;
  const input = inputOf(cr.times, cr.levels, n, th);
  const rising = cr.times.slice(0, n).filter((_, i) => cr.levels[i] === 1);
  const full = analyzeRing(inputOf(cr.times, cr.levels, cr.times.length, th));
  return {
    edges: n,
    model_ppm: ppm(1 / analyzeRing(input).fd_hz),
    line_ppm: ppm(fitLinePeriod(input).period_s),
    line_rising_ppm: ppm(slope(rising)),
    reciprocal_ppm: ppm(reciprocalPeriod(input).period_s),
    model_full_ring_ppm: ppm(1 / full.fd_hz),
    full_ring_edges: cr.times.length,
  };
}

/** Least-squares slope of t_j against j (one event per period). */
function slope(t: number[]): number {
  const n = t.length;
  const jm = (n - 1) / 2;
  const tm = t.reduce((s, v) => s + v, 0) / n;
  let sjt = 0, sjj = 0;
  for (let j = 0; j < n; j++) {
    sjt += (j - jm) * (t[j] - tm);
    sjj += (j - jm) * (j - jm);
  }
  return sjt / sjj;
}

export function cutScan(th: [number, number]): CutScan {
  const cr = ring(th[0], th[1]);
  const bad: CutScan["bad"] = [];
  let worst = 0;
  for (let n = 20; n <= cr.times.length; n++) {
    try {
      const a = analyzeRing(inputOf(cr.times, cr.levels, n, th));
      const b = ppm(1 / a.fd_hz);
      if (Math.abs(b) > Math.abs(worst)) worst = b;
      if (Math.abs(b) > 1) bad.push({ edges: n, ppm: b, warnings: a.warnings.map((w) => w.code).join(",") });
    } catch (e) {
      bad.push({ edges: n, ppm: NaN, warnings: `failed: ${(e as { code?: string }).code ?? e}` });
    }
  }
  return { cuts: cr.times.length - 19, bad, worst_ppm: worst };
}
