// What the report plots, computed from a capture: the fitted ring (the analysis' own model,
// docs/method.md §2: v = A0 e^(-alpha t) sin(wd t - phi)) with its envelope and the edges on
// their thresholds; each edge's timing residual; the period between like edges against the ring
// amplitude at that moment, beside what the model predicts (a tank whose capacitance depends on
// the voltage makes the measured periods leave the model line, docs/method.md §6); and the budget.
// Pure: no I/O.

import { modelEdgeTime, P_ALPHA, P_LNA, P_PHI, P_WD } from "../analysis/edge-model.ts";
import type { CaptureV1 } from "../capture/capture-file.ts";
import { fitCapture } from "../measure/read-once.ts";
import { buildResult, type ResultJson } from "../measure/result.ts";

export interface ReportData {
  result: ResultJson;
  budget: { name: string; rel_u: number }[];
  thresholds_v: [number, number];
  /** Reconstructed ring over the first cycles, seconds and volts. */
  ring: { t_s: number[]; v_v: number[]; envelope_v: number[] };
  /** All edges: time, threshold crossed, timing residual (s), whether the fit used it. */
  edges: { t_s: number; level_v: number; residual_s: number; used: boolean }[];
  /** Window of the detailed ring plot. */
  detail_end_s: number;
  /** Period between consecutive used edges of the same kind, against amplitude. */
  periods: { amplitude_v: number; period_s: number; model_period_s: number; rising: boolean }[];
  drift?: { df_rel: number; df_rel_u: number };
}

const DETAIL_CYCLES = 10;
const SAMPLES_PER_CYCLE = 48;

export function reportData(capture: CaptureV1): ReportData {
  const { fit: s, analysis } = fitCapture(capture);
  const result = buildResult(analysis, capture);
  const p = s.p;
  const wd = p[P_WD];
  const alpha = p[P_ALPHA];
  const A0 = Math.exp(p[P_LNA]);
  const [vh, vl] = capture.thresholds_v;
  const e = s.edges;

  const edges: ReportData["edges"] = [];
  for (let k = 0; k < e.n; k++) {
    const res = s.slope[k] !== 0 && Number.isFinite(s.r[k]) ? s.r[k] / s.slope[k] : NaN;
    edges.push({ t_s: e.t_s[k], level_v: e.rising[k] ? vh : vl, residual_s: res, used: s.used[k] > 0 });
  }
  const T = (2 * Math.PI) / wd;
  const lastEdge = e.n > 0 ? e.t_s[e.n - 1] : 10 * T;
  const detailEnd = Math.min(lastEdge + T / 2, (DETAIL_CYCLES + 0.25) * T + Math.max(0, p[P_PHI] / wd));
  const ring = { t_s: [] as number[], v_v: [] as number[], envelope_v: [] as number[] };
  const nS = Math.ceil((detailEnd / T) * SAMPLES_PER_CYCLE);
  for (let i = 0; i <= nS; i++) {
    const t = (i / nS) * detailEnd;
    const env = A0 * Math.exp(-alpha * t);
    ring.t_s.push(t);
    ring.v_v.push(env * Math.sin(wd * t - p[P_PHI]));
    ring.envelope_v.push(env);
  }

  // Consecutive used edges two half-cycles apart: one full period each.
  const periods: ReportData["periods"] = [];
  const byM = new Map<number, number>();
  for (let k = 0; k < e.n; k++) if (s.used[k] > 0 && Number.isFinite(e.m[k])) byM.set(e.m[k], e.t_s[k]);
  for (const [m, t1] of byM) {
    const t2 = byM.get(m + 2);
    if (t2 === undefined) continue;
    const tm = (t1 + t2) / 2;
    const model = modelEdgeTime(p, m + 2, vh, vl) - modelEdgeTime(p, m, vh, vl);
    periods.push({ amplitude_v: A0 * Math.exp(-alpha * tm), period_s: t2 - t1, model_period_s: model, rising: m % 2 === 0 });
  }
  periods.sort((a, b) => b.amplitude_v - a.amplitude_v);
  return {
    result,
    budget: analysis.budget,
    thresholds_v: [vh, vl],
    ring,
    edges,
    detail_end_s: detailEnd,
    periods,
    ...(analysis.drift ? { drift: analysis.drift } : {}),
  };
}
