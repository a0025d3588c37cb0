// Single-core throughput of analyzeRing on 500-edge captures. The captures are made first (not
// timed); then the analysis runs round-robin over the parts so that no part's JIT profile
// dominates. Node runs JavaScript on one thread, so this is one core. Time is the process's CPU
// time (user + system, GC threads included), which other jobs on a shared machine do not
// inflate the way they inflate wall-clock time; wall-clock is reported beside it.

import { analyzeRing, type RingInput } from "../../../host/src/analysis/index.ts";
import { modelEvaluations } from "../../../host/src/analysis/edge-model.ts";
import { captureOf, GRID, preparePoint } from "./grid.ts";

export const THROUGHPUT_EDGES = 500;

/** The grid's parts whose rings give at least 500 edges, each capture cut at 500. */
function parts(): { name: string; sym: boolean; captures: RingInput[] }[] {
  const out = [];
  for (const g of GRID) {
    if (g.max_edges < THROUGHPUT_EDGES || g.name.endsWith("-500")) continue;
    const pp = preparePoint({ ...g, max_edges: THROUGHPUT_EDGES });
    if (pp.times_s.length < THROUGHPUT_EDGES) continue;
    const captures = Array.from({ length: 40 }, (_, i) => captureOf(pp, 5000 + i));
    out.push({ name: g.name, sym: g.thresholds === "sym", captures });
  }
  return out;
}

export interface Throughput {
  captures_per_s: number;
  offset_per_s: number;
  symmetric_per_s: number;
  /** The same by wall-clock time (lower when other jobs share the cores). */
  wall_captures_per_s: number;
  /**
   * Per-edge model evaluations (edge-model.ts evaluateEdges: one edge's residual and derivatives
   * = 1) per capture, mean over one pass of the captures: a work count that does not depend on
   * the machine.
   */
  evaluations_per_capture: number;
  parts: string[];
}

export function measureThroughput(passes = 3): Throughput {
  const ps = parts();
  // Warm-up (JIT and caches), and the work count: the same captures give the same count.
  const e0 = modelEvaluations();
  let analysed = 0;
  for (const p of ps) {
    for (const c of p.captures) {
      analyzeRing(c);
      analysed++;
    }
  }
  const evaluations_per_capture = (modelEvaluations() - e0) / analysed;
  const time_us = { offset: 0, sym: 0 };
  const count = { offset: 0, sym: 0 };
  const wall0 = performance.now();
  for (let pass = 0; pass < passes; pass++) {
    for (let i = 0; i < ps[0].captures.length; i++) {
      for (const p of ps) {
        const c0 = process.cpuUsage();
        analyzeRing(p.captures[i]);
        const c = process.cpuUsage(c0);
        const k = p.sym ? "sym" : "offset";
        time_us[k] += c.user + c.system;
        count[k]++;
      }
    }
  }
  const wall_s = (performance.now() - wall0) / 1000;
  const total = count.offset + count.sym;
  return {
    captures_per_s: (1e6 * total) / (time_us.offset + time_us.sym),
    offset_per_s: (1e6 * count.offset) / time_us.offset,
    symmetric_per_s: (1e6 * count.sym) / time_us.sym,
    wall_captures_per_s: total / wall_s,
    evaluations_per_capture,
    parts: ps.map((p) => p.name),
  };
}
