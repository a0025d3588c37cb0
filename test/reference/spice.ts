// Runs ngspice (Debian package "ngspice", batch mode) on a front-end netlist and reads back the
// ring voltage. Used only by reference tests: the simulator is checked against an independent
// circuit solver.

import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import type { CaptureV1 } from "../../host/src/capture/capture-file.ts";
import type { FrontEndCircuit } from "../../host/src/physics/front-end-circuit.ts";
import { Random } from "../../host/src/sim/random.ts";

export const hasNgspice = spawnSync("ngspice", ["--version"], { encoding: "utf8" }).status === 0;

export interface SpiceRun {
  /** Seconds since the gate turned off. */
  t_s: Float64Array;
  /** Comparator voltage v(D) - v(T). */
  v_v: Float64Array;
}

/**
 * The linear front end of physics/front-end-circuit.ts as a SPICE netlist, with the charge phase
 * included: the switch closes at t = 0 and opens at `charge_s`; the blocking diode is its forward
 * drop while conducting (a source in series with the switch).
 */
export function frontEndNetlist(c: FrontEndCircuit, switch_on_ohm: number, diode_v: number, charge_s: number, stop_s: number, max_step_s: number, out: string): string {
  const rp = Number.isFinite(c.rp_ohm) ? `RP1 t d ${c.rp_ohm}\n` : "";
  const rsense = c.sense_ohm !== undefined && Number.isFinite(c.sense_ohm) ? `RSENSE d 0 ${c.sense_ohm}\n` : "";
  return `* henrytick front end, ring-down validation
V1 vs 0 ${c.supply_v}
RD vs t ${c.r_ohm}
L1 t n1 ${c.l_h}
RS1 n1 d ${c.rs_ohm}
${rp}C1 t d ${c.c_f}
CSW1 d 0 ${c.csw_f}
${rsense}VF d x ${diode_v}
S1 x 0 g 0 SWM
.model SWM SW(Ron=${switch_on_ohm} Roff=1e13 Vt=0.5 Vh=0.1)
VG g 0 PWL(0 1 ${charge_s} 1 ${charge_s + 1e-12} 0)
.options reltol=1e-8 abstol=1e-16 vntol=1e-12 chgtol=1e-22 method=trap
.tran ${max_step_s} ${charge_s + stop_s} ${charge_s} ${max_step_s} uic
.control
run
wrdata ${out} v(d,t)
quit 0
.endc
.end
`;
}

export function runSpice(netlist: string, charge_s: number): SpiceRun {
  const cols = runSpiceColumns(netlist);
  const t = new Float64Array(cols.length);
  const v = new Float64Array(cols.length);
  cols.forEach((row, i) => {
    t[i] = row[0] - charge_s;
    v[i] = row[1];
  });
  return { t_s: t, v_v: v };
}

/** The rows of the netlist's `wrdata` record as numbers (for several vectors: t, v1, t, v2, ...). */
export function runSpiceColumns(netlist: string): number[][] {
  const dir = mkdtempSync(join(tmpdir(), "henrytick-spice-"));
  try {
    const out = join(dir, "out.txt");
    const cir = join(dir, "ring.cir");
    writeFileSync(cir, netlist.replace(/wrdata \S+/, `wrdata ${out}`));
    // Batch mode may exit non-zero after notes; the data file and its row count decide.
    spawnSync("ngspice", ["-b", cir], { stdio: "pipe", timeout: 120_000 });
    let text = "";
    try {
      text = readFileSync(out, "utf8");
    } catch {
      throw new Error(`ngspice produced no data for:\n${netlist}`);
    }
    return text.trim().split("\n").map((row) => row.trim().split(/\s+/).map(Number));
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Upward crossings of `level` (the ring's rest value; linear interpolation) after t > 0. */
export function upwardZeroCrossings(r: SpiceRun, level = 0): number[] {
  const out: number[] = [];
  for (let i = 1; i < r.t_s.length; i++) {
    if (r.t_s[i - 1] <= 0) continue;
    const a = r.v_v[i - 1] - level;
    const b = r.v_v[i] - level;
    if (a < 0 && b >= 0) {
      const f = -a / (b - a);
      out.push(r.t_s[i - 1] + f * (r.t_s[i] - r.t_s[i - 1]));
    }
  }
  return out;
}

/**
 * The maximum of each cycle after the switch opens (cycles bounded by upward zero crossings;
 * the first runs from t = 0), refined by a parabola through the three samples around it.
 */
export function cycleMaxima(r: SpiceRun): { t: number; v: number }[] {
  const bounds = [0, ...upwardZeroCrossings(r)];
  const out: { t: number; v: number }[] = [];
  let i = 0;
  while (i < r.t_s.length && r.t_s[i] < 0) i++;
  for (let k = 0; k + 1 < bounds.length; k++) {
    let best = -1;
    for (; i < r.t_s.length && r.t_s[i] < bounds[k + 1]; i++) {
      if (best < 0 || r.v_v[i] > r.v_v[best]) best = i;
    }
    if (best <= 0 || best + 1 >= r.t_s.length) continue;
    const a = r.v_v[best - 1], b = r.v_v[best], c = r.v_v[best + 1];
    const den = a - 2 * b + c;
    // A maximum on the record's first samples (or on repeated time points) is not refined.
    const d = den < 0 ? Math.max(-1, Math.min(1, (0.5 * (a - c)) / den)) : 0;
    out.push({ t: r.t_s[best] + d * (r.t_s[best + 1] - r.t_s[best]), v: b - 0.25 * (a - c) * d });
  }
  return out;
}

/** Least-squares slope of y against x. */
export function slope(x: number[], y: number[]): number {
  const n = x.length;
  const mx = x.reduce((s, v) => s + v, 0) / n;
  const my = y.reduce((s, v) => s + v, 0) / n;
  let sxy = 0, sxx = 0;
  for (let i = 0; i < n; i++) {
    sxy += (x[i] - mx) * (y[i] - my);
    sxx += (x[i] - mx) ** 2;
  }
  return sxy / sxx;
}

/**
 * The ring-down of docs/method.md §1 as a netlist: L (with Rs, optional core loss Rp) across C,
 * released with current I0 and zero voltage; the output is the voltage across C, positive first.
 * Optional, for the part-fault checks: a winding whose flux saturates, i = phi/L + k phi³ (a
 * differential inductance falling with current; built from a flux integrator and a behavioural
 * current source), and a clamp across the ring (a diode in series with a stand-off voltage, 1 Ω).
 */
export interface SpiceRingPart {
  l_h: number;
  rs_ohm: number;
  rp_ohm?: number;
  c_f: number;
  i0_a: number;
  /** Cubic flux law coefficient k, A/Wb³ (0: linear). */
  cubic_a_per_wb3?: number;
  /** Clamp stand-off voltage across the ring (absent: none). */
  clamp_v?: number;
}

export function ringNetlist(p: SpiceRingPart, step_s: number, stop_s: number): string {
  const k = p.cubic_a_per_wb3 ?? 0;
  let winding: string;
  if (k === 0) {
    winding = `L1 a m ${p.l_h} ic=${p.i0_a}\n`;
  } else {
    // Flux phi0 that carries I0: Newton on phi/L + k phi^3 = I0.
    let phi = p.i0_a * p.l_h;
    for (let i = 0; i < 60; i++) phi -= (phi / p.l_h + k * phi ** 3 - p.i0_a) / (1 / p.l_h + 3 * k * phi ** 2);
    winding = `BV 0 phi I=V(a,m)\nCPHI phi 0 1 ic=${phi}\nRPHI phi 0 1e15\nBL a m I=V(phi)/${p.l_h}+${k}*V(phi)*V(phi)*V(phi)\n`;
  }
  const clamp = p.clamp_v !== undefined ? `DCL b x DCLAMP\nVCL x a ${p.clamp_v}\n.model DCLAMP D(IS=1e-12 N=1 RS=1)\n` : "";
  return `* docs/method.md §1 ring-down
${winding}R1 m b ${p.rs_ohm}
C1 a b ${p.c_f} ic=0
${p.rp_ohm ? `RP a b ${p.rp_ohm}\n` : ""}${clamp}RG b 0 1e-3
.options reltol=1e-9 abstol=1e-15 vntol=1e-12 method=trap
.tran ${step_s} ${stop_s} 0 ${step_s} uic
.control
run
wrdata OUT v(b,a)
quit 0
.endc
.end
`;
}

/** w0 and alpha of the linear §1 circuit. */
export function ringCircuit(p: SpiceRingPart): { w0: number; alpha: number } {
  const gp = p.rp_ohm ? 1 / p.rp_ohm : 0;
  const w0sq = (1 + p.rs_ohm * gp) / (p.l_h * p.c_f);
  return { w0: Math.sqrt(w0sq), alpha: p.rs_ohm / (2 * p.l_h) + gp / (2 * p.c_f) };
}

/** ngspice transient of a §1 ring, `steps` per period (default 2000), until it is well below `floor_v`. */
export function spiceRing(p: SpiceRingPart, floor_v = 0.004, max_periods = 4000, steps = 2000): SpiceRun {
  const { w0, alpha } = ringCircuit(p);
  const period = (2 * Math.PI) / w0;
  const a0 = p.i0_a / (p.c_f * w0);
  const stop = Math.min(Math.log(a0 / floor_v) / alpha, max_periods * period);
  return runSpice(ringNetlist(p, period / steps, stop), 0);
}

/**
 * A plain comparator with hysteresis on a sampled ring (starts low): crossings interpolated
 * between samples, Gaussian jitter of half a tick (docs/method.md §3: jitter >= tick/2 for the
 * tick²/12 model), floored to ticks.
 */
export function hysteresisEdges(ring: SpiceRun, vh: number, vl: number, tick_hz: number, seed: number): { ticks: number[]; levels: number[] } {
  const rng = new Random(seed);
  const ticks: number[] = [];
  const levels: number[] = [];
  let high = false;
  for (let i = 1; i < ring.t_s.length; i++) {
    const level = high ? vl : vh;
    const a = ring.v_v[i - 1] - level;
    const b = ring.v_v[i] - level;
    if (high ? a > 0 && b <= 0 : a < 0 && b >= 0) {
      const t = ring.t_s[i - 1] + (a / (a - b)) * (ring.t_s[i] - ring.t_s[i - 1]) + (0.5 / tick_hz) * rng.normal();
      ticks.push(Math.max(Math.floor(t * tick_hz), ticks.length ? ticks[ticks.length - 1] : 0));
      levels.push(high ? 0 : 1);
      high = !high;
    }
  }
  return { ticks, levels };
}

/** A capture record of edges on a known tank, as `analyze` would read it from a file (uncalibrated unless said). */
export function spiceCapture(
  edges: { ticks: number[]; levels: number[] }, o: { tick_hz: number; tank_c_f: number; thresholds_v: [number, number]; tank_calibrated?: boolean; tank_c_u_f?: number },
): CaptureV1 {
  return {
    format: "henrytick-capture", version: 1, tick_hz: o.tick_hz, tank_c_f: o.tank_c_f,
    ...(o.tank_c_u_f !== undefined ? { tank_c_u_f: o.tank_c_u_f } : {}),
    thresholds_v: o.thresholds_v,
    calibration: { source: "ngspice reference", tank_calibrated: o.tank_calibrated ?? false, nominal_tank_c_f: o.tank_c_f, nominal_tick_hz: o.tick_hz, timebase_ppm: 0 },
    meta: { end_reason: "quiet" },
    edges: edges.ticks.map((t, i) => [t, edges.levels[i]] as [number, number]),
  };
}
