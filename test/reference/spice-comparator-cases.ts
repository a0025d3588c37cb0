// ngspice ring-downs through the physical comparator at the reference board's values, analysed
// as a reading: the cases behind the cross-check table of docs/performance.md and its test.
//
// Each case is the docs/method.md §1 circuit rung by ngspice (spice.ts); the sampled record is
// the input of physicalEdges (first passage of ring + band-limited noise, rise and fall delays,
// overdrive delay, jitter, timer) through its spline waveform, with the reference board's
// comparator and timer (host/src/sim/board-model.ts, docs/hardware.md), the crystal taken as
// exact. The capture says what a calibrated tester would know: the thresholds with the
// comparator's offset, the tank to 0.01 % and the timebase to 0.1 ppm, so that U is the fit's share plus the part's self-capacitance term, and the
// check is on the analysis, not on a tank tolerance that would swamp it.

import type { RingAnalysis } from "../../host/src/analysis/index.ts";
import type { DeviceProfile } from "../../host/src/device/profile.ts";
import { comparatorRecord } from "../../host/src/measure/capture-build.ts";
import { analyzeCapture } from "../../host/src/measure/read-once.ts";
import { referenceBoard } from "../../host/src/sim/board-model.ts";
import { physicalEdges, sampledWaveform } from "../../host/src/sim/comparator-physics.ts";
import type { PhysicalComparator } from "../../host/src/sim/comparator-physics.ts";
import { Random } from "../../host/src/sim/random.ts";
import { ringCircuit, spiceCapture, spiceRing } from "./spice.ts";
import type { SpiceRingPart, SpiceRun } from "./spice.ts";

/** A profile stating the board's comparator timing as its firmware does (docs/protocol.md, PD). */
function boardProfileTiming(c: ReturnType<typeof referenceBoard>["comparator"]): DeviceProfile {
  return {
    comparator: {
      noise_v: c.noise_v, noise_bw_hz: c.noise_bw_hz ?? 0, delay_rise_s: c.delay_rise_s, delay_fall_s: c.delay_fall_s,
      skew_u_s: 20e-9, overdrive_v_s: c.overdrive_v_s ?? 0,
    },
  } as DeviceProfile;
}

export interface CrossCheckCase extends SpiceRingPart {
  name: string;
  /** The part's own self-capacitance, farads, in parallel with the tank (part of c_f in the netlist). */
  cs_f?: number;
}

const TANK_U_REL = 1e-4;
const TIMEBASE_U_PPM = 0.1;

/** Parts from 10 µH to 100 mH, ring frequencies 5 kHz to 1.6 MHz; invented for the check. */
export const CASES: CrossCheckCase[] = [
  { name: "10 µH, 1 Ω on 1 nF (1.6 MHz)", l_h: 10e-6, rs_ohm: 1, c_f: 1e-9, i0_a: 0.05 },
  { name: "47 µH, 0.4 Ω on 10 nF (230 kHz)", l_h: 47e-6, rs_ohm: 0.4, c_f: 10e-9, i0_a: 0.05 },
  { name: "330 µH, 0.42 Ω on 100 nF (28 kHz)", l_h: 330e-6, rs_ohm: 0.42, c_f: 100e-9, i0_a: 0.05 },
  { name: "4.7 mH, 2.9 Ω on 100 nF (7.3 kHz)", l_h: 4.7e-3, rs_ohm: 2.9, c_f: 100e-9, i0_a: 0.01 },
  { name: "10 mH, 5 Ω, core loss 100 kΩ, on 100 nF (5 kHz)", l_h: 10e-3, rs_ohm: 5, rp_ohm: 100e3, c_f: 100e-9, i0_a: 0.01 },
  { name: "100 mH, 40 Ω, 300 pF self-capacitance, on 10 nF (4.9 kHz)", l_h: 100e-3, rs_ohm: 40, c_f: 10.3e-9, cs_f: 300e-12, i0_a: 0.002 },
];

export interface CrossCheckRow {
  name: string;
  seed: number;
  /** Relative errors of L (against L (C + Cs)/C, the apparent inductance on the tank C) and Q. */
  l_err_rel: number;
  q_err_rel: number;
  /** Expanded relative uncertainties (k = 2) the reading states. */
  l_u_rel: number;
  q_u_rel: number;
  /** Its fit-only share of U(L), k = 2. */
  l_u_fit_rel: number;
  edges: number;
  warnings: string[];
}

/** The ngspice record of a case (the slow part: run once per case). */
export function caseRecord(c: CrossCheckCase): SpiceRun {
  return spiceRing(c, 0.003, 3000, 250);
}

/** One seed of a case: edges through the physical comparator (the reference board's, or with `change`), analysed as a capture. */
export function crossCheck(c: CrossCheckCase, record: SpiceRun, seed: number, change: Partial<PhysicalComparator> = {}): CrossCheckRow {
  const board = referenceBoard();
  const comp: PhysicalComparator = { ...board.comparator, noise_bw_hz: board.comparator.noise_bw_hz ?? 2e6, ...change };
  const timer = { ...board.timer, ppm: 0 };
  const w = sampledWaveform(record.t_s, record.v_v);
  const edges = physicalEdges(w, comp, timer, new Random(seed), { max_edges: 8192, window_s: record.t_s[record.t_s.length - 1] });
  const tank = c.c_f - (c.cs_f ?? 0);
  const off = comp.offset_v ?? 0;
  const capture = spiceCapture(edges, {
    tick_hz: timer.tick_hz, tank_c_f: tank, tank_c_u_f: tank * TANK_U_REL, thresholds_v: [comp.rising_v + off, comp.falling_v + off], tank_calibrated: true,
  });
  capture.calibration!.timebase_u_ppm = TIMEBASE_U_PPM;
  // What the tester's profile tells a reading about its comparator (frame PD: the reference
  // board's design values, whatever `change` does to the comparator itself), applied as a reading
  // applies it (capture-build.ts).
  Object.assign(capture, comparatorRecord(boardProfileTiming(board.comparator)));
  const a: RingAnalysis = analyzeCapture(capture);
  const { w0, alpha } = ringCircuit(c);
  const lTrue = 1 / (w0 * w0 * tank); // what a reading on the tank C reports: L (C + Cs)/C, with Rp folded in as in §1
  const qTrue = w0 / (2 * alpha);
  const fit = a.budget.find((b) => b.name === "fit")?.rel_u ?? NaN;
  return {
    name: c.name, seed, l_err_rel: a.inductance_h / lTrue - 1, q_err_rel: a.q / qTrue - 1,
    l_u_rel: a.inductance_u_h / a.inductance_h, q_u_rel: a.q_u / a.q, l_u_fit_rel: 2 * fit,
    edges: a.edges_used, warnings: a.warnings.map((x) => x.code),
  };
}

export interface CaseSummary {
  name: string;
  seeds: number;
  edges: number;
  /** Means over the seeds: relative errors and stated expanded uncertainties. */
  l_err_rel: number;
  l_u_rel: number;
  l_u_fit_rel: number;
  q_err_rel: number;
  q_u_rel: number;
  /** Fractions of seeds with |error| <= U. */
  l_coverage: number;
  q_coverage: number;
  /** Seeds with an error beyond 3 U (L or Q) and no warning at all. */
  unwarned_gross: number;
  /** Warning codes seen on any seed. */
  warnings: string[];
}

export function summarise(rows: CrossCheckRow[]): CaseSummary {
  const n = rows.length;
  const mean = (f: (r: CrossCheckRow) => number) => rows.reduce((s, r) => s + f(r), 0) / n;
  return {
    name: rows[0].name, seeds: n, edges: Math.round(mean((r) => r.edges)),
    l_err_rel: mean((r) => r.l_err_rel), l_u_rel: mean((r) => r.l_u_rel), l_u_fit_rel: mean((r) => r.l_u_fit_rel),
    q_err_rel: mean((r) => r.q_err_rel), q_u_rel: mean((r) => r.q_u_rel),
    l_coverage: rows.filter((r) => Math.abs(r.l_err_rel) <= r.l_u_rel).length / n,
    q_coverage: rows.filter((r) => Math.abs(r.q_err_rel) <= r.q_u_rel).length / n,
    unwarned_gross: rows.filter((r) => r.warnings.length === 0 && (Math.abs(r.l_err_rel) > 3 * r.l_u_rel || Math.abs(r.q_err_rel) > 3 * r.q_u_rel)).length,
    warnings: [...new Set(rows.flatMap((r) => r.warnings))].sort(),
  };
}

/** Every case over `seeds` seeds (from 1). */
export function crossCheckAll(seeds: number, progress: (s: CaseSummary) => void = () => {}): CaseSummary[] {
  return CASES.map((c) => {
    const record = caseRecord(c);
    const rows: CrossCheckRow[] = [];
    for (let s = 1; s <= seeds; s++) rows.push(crossCheck(c, record, s));
    const summary = summarise(rows);
    progress(summary);
    return summary;
  });
}
