// The reference front end after the switch opens (docs/hardware.md), solved exactly.
//
// Nodes: T (top of the part, fed from the supply through the drive resistor R) and D (the
// part's other end, on the switch). States x = [i_L, v_TD, v_D]:
//   L di/dt        = v_TD - Rs i
//   C dv_TD/dt     = i_R - i - v_TD / Rp             C = tank + fixture + part self-capacitance
//   Csw dv_D/dt    = i_R                             Csw: switch-node capacitance to ground
//   i_R            = (V - v_D - v_TD) / R
// Linear, so x(t) = x_eq + sum of modes; the comparator sees v = v_D - v_T = -v_TD. The
// characteristic cubic has one fast real root (R with Csw) and the ring's complex pair, which is
// polished by Newton's method in complex arithmetic from the second-order estimate.

import type { RingWave } from "./ring-wave.ts";

export interface FrontEndCircuit {
  l_h: number;
  rs_ohm: number;
  /** Parallel loss; Infinity when absent. */
  rp_ohm: number;
  /** Everything in parallel with the part between T and D. */
  c_f: number;
  /** Switch-node capacitance from D to ground. */
  csw_f: number;
  /** Drive resistance from the supply to T while the switch is open. */
  r_ohm: number;
  supply_v: number;
}

export interface InitialState {
  i_a: number;
  v_td_v: number;
  v_d_v: number;
}

/** x' = A x + b for the circuit above. */
export function stateMatrix(c: FrontEndCircuit): { a: number[][]; b: number[] } {
  const gp = Number.isFinite(c.rp_ohm) ? 1 / c.rp_ohm : 0;
  const rc = c.r_ohm * c.c_f;
  const rcs = c.r_ohm * c.csw_f;
  return {
    a: [
      [-c.rs_ohm / c.l_h, 1 / c.l_h, 0],
      [-1 / c.c_f, -1 / rc - gp / c.c_f, -1 / rc],
      [0, -1 / rcs, -1 / rcs],
    ],
    b: [0, c.supply_v / rc, c.supply_v / rcs],
  };
}

/** Exact closed form of the comparator voltage v(t) = -v_TD(t). Throws when it does not ring. */
export function solveRing(c: FrontEndCircuit, x0: InitialState): RingWave {
  const { a } = stateMatrix(c);
  // Characteristic polynomial l^3 + p l^2 + q l + r of the 3x3 matrix.
  const tr = a[0][0] + a[1][1] + a[2][2];
  const minors =
    a[0][0] * a[1][1] - a[0][1] * a[1][0] + a[0][0] * a[2][2] - a[0][2] * a[2][0] + a[1][1] * a[2][2] - a[1][2] * a[2][1];
  const det =
    a[0][0] * (a[1][1] * a[2][2] - a[1][2] * a[2][1]) -
    a[0][1] * (a[1][0] * a[2][2] - a[1][2] * a[2][0]) +
    a[0][2] * (a[1][0] * a[2][1] - a[1][1] * a[2][0]);
  const p = -tr;
  const q = minors;
  const r = -det;
  const [re, im] = ringRoot(c, p, q, r);
  if (!(im > 0)) throw new RangeError("the front end does not ring with this part (overdamped)");
  const alpha = -re;
  const wd = im;
  const lambda3 = -p - 2 * re;
  // y = x - x_eq with x_eq = [0, 0, V]; v = -v_TD and its derivatives from y' = A y.
  const y0 = [x0.i_a, x0.v_td_v, x0.v_d_v - c.supply_v];
  const y1 = mul(a, y0);
  const y2 = mul(a, y1);
  const v0 = -y0[1];
  const v1 = -y1[1];
  const v2 = -y2[1];
  const w0sq = alpha * alpha + wd * wd;
  const s = (v2 + 2 * alpha * v1 + w0sq * v0) / (lambda3 * lambda3 + 2 * alpha * lambda3 + w0sq);
  const pc = v0 - s;
  const qc = (v1 + alpha * pc - lambda3 * s) / wd;
  return { alpha_per_s: alpha, wd_rad_s: wd, p_v: pc, q_v: qc, s_v: s, lambda3_per_s: lambda3 };
}

/** The ring's root of the cubic, Newton-polished from the second-order estimate. */
function ringRoot(c: FrontEndCircuit, p: number, q: number, r: number): [number, number] {
  const gp = Number.isFinite(c.rp_ohm) ? 1 / c.rp_ohm : 0;
  // Second-order estimate: the drive resistor keeps Csw nearly out of the ring's loop.
  const w0sq = (1 + c.rs_ohm * gp) / (c.l_h * c.c_f);
  const a0 = c.rs_ohm / (2 * c.l_h) + gp / (2 * c.c_f);
  let zr = -a0;
  let zi = Math.sqrt(Math.max(w0sq - a0 * a0, 0)) || Math.sqrt(w0sq);
  for (let k = 0; k < 100; k++) {
    // f = z^3 + p z^2 + q z + r, f' = 3 z^2 + 2 p z + q, by Horner in complex arithmetic.
    let fr = 1, fi = 0;
    [fr, fi] = [fr * zr - fi * zi + p, fr * zi + fi * zr];
    [fr, fi] = [fr * zr - fi * zi + q, fr * zi + fi * zr];
    [fr, fi] = [fr * zr - fi * zi + r, fr * zi + fi * zr];
    let dr = 3, di = 0;
    [dr, di] = [dr * zr - di * zi + 2 * p, dr * zi + di * zr];
    [dr, di] = [dr * zr - di * zi + q, dr * zi + di * zr];
    const den = dr * dr + di * di;
    const sr = (fr * dr + fi * di) / den;
    const si = (fi * dr - fr * di) / den;
    zr -= sr;
    zi -= si;
    if (Math.abs(sr) + Math.abs(si) <= 1e-15 * Math.hypot(zr, zi)) break;
  }
  return [zr, Math.abs(zi)];
}

function mul(a: number[][], x: number[]): number[] {
  return a.map((row) => row[0] * x[0] + row[1] * x[1] + row[2] * x[2]);
}

/**
 * State when the switch opens after closing it for `charge_s`: the inductor current rises with
 * the loop's L/R time constant (Rp's small share of the current is neglected), the capacitors
 * follow quasi-statically, and D sits one diode drop above the switch.
 */
export function stateAtOpening(c: FrontEndCircuit, switch_on_ohm: number, diode_v: number, charge_s: number): InitialState {
  const loop = c.r_ohm + c.rs_ohm + switch_on_ohm;
  const drive_v = Math.max(c.supply_v - diode_v, 0);
  const i0 = (drive_v / loop) * (1 - Math.exp((-charge_s * loop) / c.l_h));
  return {
    i_a: i0,
    v_td_v: drive_v - i0 * (c.r_ohm + switch_on_ohm),
    v_d_v: diode_v + i0 * switch_on_ohm,
  };
}
