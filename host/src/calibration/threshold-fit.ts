// Comparator threshold ratio from a high-Q ring. Scaling both thresholds only rescales the
// fitted amplitude, so what the edges can tell is their ratio; in the hardware it moves with the
// comparator's input offset, which shifts both thresholds alike. A wrong ratio mis-predicts how
// late each edge is as the ring decays (docs/method.md §2), and the fit turns that into an
// apparent change of frequency between the strong and the weak half of the ring. So the offset
// is the one at which the analysis's drift diagnostic says the frequency is the same in both
// halves; on a C0G/film tank nothing else makes it move. Overdrive-dependent comparator delay
// acts like a threshold shift too and is absorbed the same way (the "effective" thresholds). Pure.

import type { RingInput } from "../analysis/index.ts";
import { analyzeRing } from "../analysis/index.ts";
import { CalibrationError } from "./errors.ts";

/** Fewest Q for which the amplitude sweep across the ring pins the ratio down. */
export const MIN_Q_FOR_THRESHOLDS = 30;

export interface ThresholdFit {
  offset_v: number;
  /** Standard uncertainty of offset_v. */
  u_offset_v: number;
  thresholds_v: [number, number];
  ratio: number;
  u_ratio: number;
  per_capture: { offset_v: number; u_v: number }[];
}

/** Relative strong-half to weak-half frequency change, and its standard uncertainty, at an offset. */
function drift(input: RingInput, offset: number): { d: number; u: number } | null {
  const th: [number, number] = [input.thresholds_v[0] + offset, input.thresholds_v[1] + offset];
  try {
    const a = analyzeRing({ ...input, thresholds_v: th });
    return a.drift ? { d: a.drift.df_rel, u: a.drift.df_rel_u } : null;
  } catch {
    return null;
  }
}

/** The offset at which the drift vanishes, for one capture: bracket on a grid, then bisection. */
export function offsetForNoDrift(input: RingInput, span_v: number): { offset_v: number; u_v: number } {
  const n = 8;
  let prev: { o: number; d: number } | null = null;
  let lo = NaN;
  let hi = NaN;
  for (let i = 0; i <= n && Number.isNaN(lo); i++) {
    const o = -span_v + (2 * span_v * i) / n;
    const r = drift(input, o);
    if (!r) continue;
    if (prev && Math.sign(prev.d) !== Math.sign(r.d)) [lo, hi] = [prev.o, o];
    prev = { o, d: r.d };
  }
  if (Number.isNaN(lo)) {
    throw new CalibrationError("NONSENSE_RESULT", "no threshold offset within a quarter of the hysteresis explains the ring; check that the tank is C0G/film (a class II tank drifts by itself) and measure again");
  }
  const dLo = drift(input, lo)!.d;
  for (let k = 0; k < 12; k++) {
    const mid = (lo + hi) / 2;
    const r = drift(input, mid);
    if (!r) break;
    if (Math.sign(r.d) === Math.sign(dLo)) lo = mid;
    else hi = mid;
  }
  const o = (lo + hi) / 2;
  // Slope of the drift with the offset, over a step well above the bisection's width.
  const h = span_v / 20;
  const a = drift(input, o - h);
  const b = drift(input, o + h);
  const at = drift(input, o);
  if (!a || !b || !at) throw new CalibrationError("NONSENSE_RESULT", "the ring could not be analysed near the fitted threshold offset; measure again");
  const slope = (b.d - a.d) / (2 * h);
  return { offset_v: o, u_v: at.u / Math.abs(slope) };
}

/** Fits the offset on each capture of a high-Q part and combines them (weighted mean, JCGM 100:2008 §4.2). */
export function fitThresholds(inputs: RingInput[], q_each: number[]): ThresholdFit {
  if (inputs.length < 2) throw new RangeError("fitThresholds needs at least two captures (their scatter checks the uncertainty)");
  const qMin = Math.min(...q_each);
  if (qMin < MIN_Q_FOR_THRESHOLDS) {
    throw new CalibrationError("OUT_OF_SPAN", `the part's Q is ${qMin.toFixed(0)}: at least ${MIN_Q_FOR_THRESHOLDS} is needed to fit the threshold ratio; use an air-core or low-loss ferrite coil`);
  }
  const [vh, vl] = inputs[0].thresholds_v;
  const per = inputs.map((x) => offsetForNoDrift(x, 0.25 * (vh - vl)));
  const w = per.map((p) => 1 / (p.u_v * p.u_v));
  const sw = w.reduce((a, b) => a + b, 0);
  const mean = per.reduce((a, p, i) => a + w[i] * p.offset_v, 0) / sw;
  // Birge ratio: widen (never narrow) when the captures scatter more than their own figures say.
  const chi2 = per.reduce((a, p, i) => a + w[i] * (p.offset_v - mean) ** 2, 0);
  const u = Math.sqrt(1 / sw) * Math.max(1, Math.sqrt(chi2 / (per.length - 1)));
  const th: [number, number] = [vh + mean, vl + mean];
  const ratio = th[0] / th[1];
  if (!(th[0] > th[1]) || !Number.isFinite(ratio)) {
    throw new CalibrationError("NONSENSE_RESULT", "the fitted thresholds are not ordered rising above falling; measure the high-Q part again");
  }
  // d(ratio)/d(offset) = (VL - VH) / (VL + offset)^2
  const u_ratio = (Math.abs(vl - vh) / th[1] ** 2) * u;
  return { offset_v: mean, u_offset_v: u, thresholds_v: th, ratio, u_ratio, per_capture: per };
}
