// The efficiency run: every grid point, many noise seeds, the analysis' L and Q errors against
// the point's Cramér-Rao bound. Failed analyses are kept and counted by error code.

import { analyzeRing } from "../../../host/src/analysis/index.ts";
import { captureOf, GRID, preparePoint, type PreparedPoint } from "./grid.ts";
import { efficiency, mean, robustEfficiency } from "./stats.ts";

/** Points with fewer edges than this are reported apart (issue 3): small-sample bias. */
export const FEW_EDGES = 40;

export interface PointResult {
  pp: PreparedPoint;
  seeds: number[];
  /** Relative errors of L and Q per seed (NaN where the analysis failed). */
  l_err: number[];
  q_err: number[];
  failures: Record<string, number>;
  l_eff: { eff: number; u: number };
  q_eff: { eff: number; u: number };
  l_eff_robust: number;
  q_eff_robust: number;
  /** Mean error over the bound sd (bias in bound units). */
  l_bias_sd: number;
  q_bias_sd: number;
  /** Captures with an L or Q error beyond 5 bound sd (Gaussian odds 6e-7), and those of them
   *  that carried no warning at all: a wrong number presented as valid. */
  gross: number;
  gross_unwarned: number;
  /** Captures whose L (Q) error lies within the reported expanded uncertainty (k = 2). */
  l_covered: number;
  q_covered: number;
  /** Relative bound sds. */
  l_bound_rel: number;
  q_bound_rel: number;
  ms_per_capture: number;
}

export function failureCode(e: unknown): string {
  return typeof e === "object" && e !== null && "code" in e ? String((e as { code: unknown }).code) : "EXCEPTION";
}

export function runPoint(pp: PreparedPoint, seeds: number[]): PointResult {
  const l_err: number[] = [];
  const q_err: number[] = [];
  const failures: Record<string, number> = {};
  const lb = pp.bound.l_sd_h / pp.g.l_h;
  const qb = pp.bound.q_sd / pp.q;
  let gross = 0, gross_unwarned = 0, l_covered = 0, q_covered = 0;
  const t0 = performance.now();
  for (const seed of seeds) {
    try {
      const a = analyzeRing(captureOf(pp, seed));
      const le = a.inductance_h / pp.g.l_h - 1;
      const qe = a.q / pp.q - 1;
      l_err.push(le);
      q_err.push(qe);
      if (Math.abs(le) > 5 * lb || Math.abs(qe) > 5 * qb) {
        gross++;
        if (a.warnings.length === 0) gross_unwarned++;
      }
      if (Math.abs(le * pp.g.l_h) <= a.inductance_u_h) l_covered++;
      if (Math.abs(qe * pp.q) <= a.q_u) q_covered++;
    } catch (e) {
      const code = failureCode(e);
      failures[code] = (failures[code] ?? 0) + 1;
      l_err.push(NaN);
      q_err.push(NaN);
    }
  }
  const ms = (performance.now() - t0) / seeds.length;
  const lOk = l_err.filter(Number.isFinite);
  const qOk = q_err.filter(Number.isFinite);
  return {
    pp, seeds, l_err, q_err, failures,
    l_eff: efficiency(lOk, lb), q_eff: efficiency(qOk, qb),
    l_eff_robust: robustEfficiency(lOk, lb), q_eff_robust: robustEfficiency(qOk, qb),
    l_bias_sd: mean(lOk) / lb, q_bias_sd: mean(qOk) / qb,
    gross, gross_unwarned, l_covered, q_covered,
    l_bound_rel: lb, q_bound_rel: qb, ms_per_capture: ms,
  };
}

export function runGrid(seedsPerPoint: number, progress: (m: string) => void): PointResult[] {
  const seeds = Array.from({ length: seedsPerPoint }, (_, i) => i + 1);
  const out: PointResult[] = [];
  progress(`grid: ${GRID.length} points x ${seedsPerPoint} seeds (bound sd relative; eff = bound / rms error; MC u in brackets)`);
  progress(header());
  for (const g of GRID) {
    const r = runPoint(preparePoint(g), seeds);
    out.push(r);
    progress(row(r));
  }
  return out;
}

function header(): string {
  return ["point".padEnd(26), "edges", " L bound", "effL(u)    ", "robL", " Q bound", "effQ(u)    ", "robQ", "   bias L/Q", "gross", "cover L/Q", "fail", "ms"].join(" ");
}

function row(r: PointResult): string {
  const f = (x: { eff: number; u: number }) => `${x.eff.toFixed(3)}(${x.u.toFixed(3)})`;
  const nFail = Object.values(r.failures).reduce((s, v) => s + v, 0);
  return [
    r.pp.g.name.padEnd(26), String(r.pp.bound.edges).padStart(5), r.l_bound_rel.toExponential(2).padStart(8),
    f(r.l_eff), r.l_eff_robust.toFixed(2), r.q_bound_rel.toExponential(2).padStart(8), f(r.q_eff),
    r.q_eff_robust.toFixed(2), `${r.l_bias_sd.toFixed(2)}/${r.q_bias_sd.toFixed(2)}`.padStart(11), String(r.gross).padStart(5), `${pct(r.l_covered, r)}/${pct(r.q_covered, r)}`.padStart(9), String(nFail).padStart(4), r.ms_per_capture.toFixed(1),
  ].join(" ");
}

function pct(count: number, r: PointResult): string {
  return ((100 * count) / r.seeds.length).toFixed(0);
}

/** Smallest efficiency among `points`, with where it occurs. */
export function minEfficiency(points: PointResult[], which: "l" | "q"): { eff: number; u: number; name: string } {
  let best = { eff: Infinity, u: NaN, name: "none" };
  for (const r of points) {
    const e = which === "l" ? r.l_eff : r.q_eff;
    if (e.eff < best.eff) best = { eff: e.eff, u: e.u, name: r.pp.g.name };
  }
  return best;
}
