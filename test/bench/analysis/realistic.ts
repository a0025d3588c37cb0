// The "realistic comparator" run: the grid's parts (grid.ts) rung through the physical comparator
// (host/src/sim/comparator-physics.ts): decisions by first passage of ring + continuous
// band-limited noise, a rise/fall delay difference (skew), the overdrive delay. The analysis gets
// what the measure layer would give it (realInput); its L and Q errors are judged against its
// own U and against the bound of the extended edge model.

import { analyzeRing, ringCramerRao, type ComparatorTiming, type RingAnalysis, type RingInput } from "../../../host/src/analysis/index.ts";
import { physicalEdges, ringWaveform, type PhysicalComparator } from "../../../host/src/sim/comparator-physics.ts";
import { Random } from "../../../host/src/sim/random.ts";
import { referenceBoard } from "../../../host/src/sim/board-model.ts";
import { failureCode, FEW_EDGES } from "./efficiency.ts";
import { GRID, preparePoint, thresholdsOf, type PreparedPoint } from "./grid.ts";
import { efficiency, mean } from "./stats.ts";

export interface RealCondition {
  skew_s: number;
  /** Continuous input noise as a multiple of the reference board's. */
  noise_x: number;
}

export const REAL_CONDITIONS: RealCondition[] = [0, 10e-9, 33e-9].flatMap((skew_s) => [1, 3].map((noise_x) => ({ skew_s, noise_x })));

/** The reference board's comparator (docs/hardware.md): noise, its bandwidth, delays, overdrive. */
function boardComparator() {
  const c = referenceBoard().comparator;
  return { noise_v: c.noise_v, noise_bw_hz: c.noise_bw_hz ?? 2e6, delay_s: c.delay_fall_s, overdrive_v_s: c.overdrive_v_s ?? 0 };
}

export function realComparator(pp: PreparedPoint, cond: RealCondition): PhysicalComparator {
  const b = boardComparator();
  const [vh, vl] = thresholdsOf(pp.g);
  return {
    rising_v: vh, falling_v: vl, delay_rise_s: b.delay_s + cond.skew_s, delay_fall_s: b.delay_s,
    overdrive_v_s: b.overdrive_v_s, jitter_s: pp.g.jitter_s, noise_v: b.noise_v * cond.noise_x, noise_bw_hz: b.noise_bw_hz,
  };
}

/** The capture window: four periods past the ring's last noiseless crossing (the capture ends on
 *  quiet there), or the buffer. */
function windowOf(pp: PreparedPoint): number {
  const period = (2 * Math.PI) / pp.ring.wd_rad_s;
  return pp.times_s[pp.times_s.length - 1] + 4 * period;
}

export function realCapture(pp: PreparedPoint, cond: RealCondition, seed: number): { ticks: number[]; levels: number[]; ring_ended: boolean } {
  const comp = realComparator(pp, cond);
  const e = physicalEdges(ringWaveform(pp.ring), comp, { tick_hz: pp.g.tick_hz, ppm: 0, dead_time_s: 0 }, new Random(seed), {
    max_edges: pp.g.max_edges, window_s: windowOf(pp),
  });
  return { ...e, ring_ended: e.ticks.length < pp.g.max_edges };
}

/**
 * What an uncalibrated tester knows of its comparator's timing: the board's design values. Skew
 * 0 ± 20 ns (standard uncertainty; rise and fall delays of ordinary comparators differ by up to
 * a few tens of ns: value from memory), the input noise's bandwidth, and the overdrive charge
 * ± 50 %.
 */
export function boardTimingPrior(): ComparatorTiming {
  const b = boardComparator();
  return { skew_s: 0, skew_u_s: 20e-9, skew_source: "board prior", noise_bw_hz: b.noise_bw_hz, noise_v: b.noise_v, overdrive_v_s: b.overdrive_v_s, overdrive_u_v_s: 0.5 * b.overdrive_v_s };
}

/** What the analysis is told about this capture (C and timebase exact: the fit alone is judged). */
export function realInput(pp: PreparedPoint, cap: { ticks: number[]; levels: number[]; ring_ended: boolean }, timing: ComparatorTiming | null = boardTimingPrior()): RingInput {
  return {
    tick_hz: pp.g.tick_hz, ticks: cap.ticks, levels: cap.levels, tank_c_f: pp.g.c_f, thresholds_v: thresholdsOf(pp.g),
    tank_c_u_f: 0, timebase_u_rel: 0, ring_ended: cap.ring_ended, ...(timing ? { comparator: timing } : {}),
  };
}

export interface RealResult {
  name: string;
  cond: RealCondition;
  edges: number;
  seeds: number;
  failures: Record<string, number>;
  l_covered: number;
  q_covered: number;
  ok: number;
  /** Mean relative Q error and mean relative U(Q) over the analysed seeds. */
  q_bias_rel: number;
  q_u_rel: number;
  l_bias_rel: number;
  l_u_rel: number;
  /** Errors beyond 3 U (L or Q) and those of them with no warning. */
  beyond3u: number;
  unwarned_gross: number;
  l_eff: { eff: number; u: number };
  q_eff: { eff: number; u: number };
  /** Warning codes seen, with counts. */
  warnings: Record<string, number>;
}

export function runRealPoint(pp: PreparedPoint, cond: RealCondition, seeds: number, timing: ComparatorTiming | null = boardTimingPrior()): RealResult {
  const comp = realComparator(pp, cond);
  // The bound of the extended edge model: first-passage spread of the continuous noise, and the
  // skew estimated with the edges under the prior the analysis is given.
  const bound = ringCramerRao(
    { wd_rad_s: pp.ring.wd_rad_s, alpha_per_s: pp.ring.alpha_per_s, a0_v: pp.ring.a0_v, tank_c_f: pp.g.c_f },
    { times_s: pp.times_s, levels: pp.levels },
    { tick_hz: pp.g.tick_hz, sigma_t_s: pp.g.jitter_s, sigma_v_v: comp.noise_v, noise_bw_hz: comp.noise_bw_hz, skew_u_s: timing ? timing.skew_u_s : 0 },
    thresholdsOf(pp.g),
  );
  const lErr: number[] = [], qErr: number[] = [], qU: number[] = [], lU: number[] = [];
  const failures: Record<string, number> = {};
  const warnings: Record<string, number> = {};
  let lCov = 0, qCov = 0, beyond = 0, unwarned = 0;
  for (let s = 1; s <= seeds; s++) {
    const cap = realCapture(pp, cond, s);
    let a: RingAnalysis;
    try {
      a = analyzeRing(realInput(pp, cap, timing));
    } catch (e) {
      const c = failureCode(e);
      failures[c] = (failures[c] ?? 0) + 1;
      continue;
    }
    const le = a.inductance_h / pp.g.l_h - 1;
    const qe = a.q / pp.q - 1;
    lErr.push(le);
    qErr.push(qe);
    lU.push(a.inductance_u_h / pp.g.l_h);
    qU.push(a.q_u / pp.q);
    if (Math.abs(le * pp.g.l_h) <= a.inductance_u_h) lCov++;
    if (Math.abs(qe * pp.q) <= a.q_u) qCov++;
    if (Math.abs(le * pp.g.l_h) > 3 * a.inductance_u_h || Math.abs(qe * pp.q) > 3 * a.q_u) {
      beyond++;
      if (a.warnings.length === 0) unwarned++;
    }
    for (const w of a.warnings) warnings[w.code] = (warnings[w.code] ?? 0) + 1;
  }
  return {
    name: pp.g.name, cond, edges: pp.bound.edges, seeds, failures, ok: lErr.length,
    l_covered: lCov / seeds, q_covered: qCov / seeds,
    q_bias_rel: mean(qErr), q_u_rel: mean(qU), l_bias_rel: mean(lErr), l_u_rel: mean(lU),
    beyond3u: beyond, unwarned_gross: unwarned,
    l_eff: efficiency(lErr, bound.l_sd_h / pp.g.l_h), q_eff: efficiency(qErr, bound.q_sd / pp.q),
    warnings,
  };
}

export function conditionName(c: RealCondition): string {
  return `skew${(c.skew_s * 1e9).toFixed(0)}ns-noise${c.noise_x}x`;
}

export function realRow(r: RealResult): string {
  const nFail = Object.values(r.failures).reduce((s, v) => s + v, 0);
  const w = Object.entries(r.warnings).map(([k, v]) => `${k}:${v}`).join(",");
  return [
    r.name.padEnd(26), conditionName(r.cond).padEnd(18), String(r.edges).padStart(5),
    `covL ${(100 * r.l_covered).toFixed(0).padStart(3)}% covQ ${(100 * r.q_covered).toFixed(0).padStart(3)}%`,
    `biasQ/U ${(r.q_bias_rel / r.q_u_rel).toFixed(2).padStart(6)} biasL/U ${(r.l_bias_rel / r.l_u_rel).toFixed(2).padStart(6)}`,
    `effL ${r.l_eff.eff.toFixed(2)} effQ ${r.q_eff.eff.toFixed(2)}`, `>3U ${r.beyond3u} (${r.unwarned_gross} unwarned)`, `fail ${nFail}`, w,
  ].join(" ");
}

/** Every grid point under every condition. */
export function runReal(seeds: number, progress: (m: string) => void): RealResult[] {
  const out: RealResult[] = [];
  for (const g of GRID) {
    const pp = preparePoint(g);
    for (const cond of REAL_CONDITIONS) {
      const r = runRealPoint(pp, cond, seeds);
      out.push(r);
      progress(realRow(r));
    }
  }
  return out;
}

/** The section's figures over the points with at least FEW_EDGES edges (coverage, bias,
 *  efficiency) and over all points (unwarned gross errors). */
export function realFigures(res: RealResult[]) {
  const many = res.filter((r) => r.edges >= FEW_EDGES);
  const minOf = (xs: RealResult[], f: (r: RealResult) => number) => {
    let best = { v: Infinity, at: "none" };
    for (const r of xs) {
      const v = f(r);
      if (v < best.v || !Number.isFinite(v)) best = { v, at: `${r.name} ${conditionName(r.cond)}` };
      if (!Number.isFinite(v)) break;
    }
    return best;
  };
  const maxOf = (xs: RealResult[], f: (r: RealResult) => number) => {
    const m = minOf(xs, (r) => -f(r));
    return { v: -m.v, at: m.at };
  };
  return {
    coverage_l_min: minOf(many, (r) => r.l_covered),
    coverage_q_min: minOf(many, (r) => r.q_covered),
    q_bias_max_rel_u: maxOf(many, (r) => Math.abs(r.q_bias_rel) / r.q_u_rel),
    efficiency_l_min: minOf(many, (r) => r.l_eff.eff),
    efficiency_q_min: minOf(many, (r) => r.q_eff.eff),
    // Refused captures count as not covered in the coverage figures (covered / seeds), so a
    // refusal never raises coverage; the refusal rate is reported beside it.
    refused_max: maxOf(many, (r) => (r.seeds - r.ok) / r.seeds),
    refused_max_all: maxOf(res, (r) => (r.seeds - r.ok) / r.seeds),
    unwarned_gross: res.reduce((s, r) => s + r.unwarned_gross, 0),
    failed: res.reduce((s, r) => s + Object.values(r.failures).reduce((a, b) => a + b, 0), 0),
    points: many.length,
  };
}
