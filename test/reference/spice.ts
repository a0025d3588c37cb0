// Runs ngspice (Debian package "ngspice", batch mode) on a front-end netlist and reads back the
// ring voltage. Used only by reference tests: the simulator is checked against an independent
// circuit solver.

import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import type { FrontEndCircuit } from "../../host/src/physics/front-end-circuit.ts";

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
    const rows = text.trim().split("\n");
    const t = new Float64Array(rows.length);
    const v = new Float64Array(rows.length);
    rows.forEach((row, i) => {
      const [a, b] = row.trim().split(/\s+/).map(Number);
      t[i] = a - charge_s;
      v[i] = b;
    });
    return { t_s: t, v_v: v };
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
