// The reference front end after the switch opens (docs/hardware.md), solved exactly.
//
// Nodes: T (top of the part, fed from the supply through the drive resistor R) and D (the
// part's other end, on the switch). States x = [i_L, v_TD, v_D]:
//   L di/dt        = v_TD - Rs i
//   C dv_TD/dt     = i_R - i - v_TD / Rp             C = tank + fixture + part self-capacitance
//   Csw dv_D/dt    = i_R - v_D / Rsense              Csw: switch-node capacitance to ground;
//                                                    Rsense: the comparator's input divider
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
  /** The comparator divider on D, to ground (Infinity when absent). */
  sense_ohm?: number;
}

export interface InitialState {
  i_a: number;
  v_td_v: number;
  v_d_v: number;
}

/** x' = A x + b for the circuit above. */
export function stateMatrix(c: FrontEndCircuit): { a: number[][]; b: number[] } {
  const gp = Number.isFinite(c.rp_ohm) ? 1 / c.rp_ohm : 0;
  const gs = c.sense_ohm !== undefined && Number.isFinite(c.sense_ohm) ? 1 / c.sense_ohm : 0;
  const rc = c.r_ohm * c.c_f;
  const rcs = c.r_ohm * c.csw_f;
  return {
    a: [
      [-c.rs_ohm / c.l_h, 1 / c.l_h, 0],
      [-1 / c.c_f, -1 / rc - gp / c.c_f, -1 / rc],
      [0, -1 / rcs, -1 / rcs - gs / c.csw_f],
    ],
    b: [0, c.supply_v / rc, c.supply_v / rcs],
  };
}

/** Exact closed form of the comparator voltage v(t) = -v_TD(t). Throws when it does not ring. */
export function solveRing(c: FrontEndCircuit, x0: InitialState): RingWave {
  const { a, b } = stateMatrix(c);
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
  // y = x - x_eq with A x_eq = -b (at rest: no ring current, D near the supply; the sense
  // divider draws a few microamperes through the part); v = -v_TD and its derivatives from y' = A y.
  const xeq = solve3(a, b.map((v) => -v));
  const y0 = [x0.i_a - xeq[0], x0.v_td_v - xeq[1], x0.v_d_v - xeq[2]];
  const y1 = mul(a, y0);
  const y2 = mul(a, y1);
  const vEq = -xeq[1];
  const v0 = -y0[1];
  const v1 = -y1[1];
  const v2 = -y2[1];
  const w0sq = alpha * alpha + wd * wd;
  const s = (v2 + 2 * alpha * v1 + w0sq * v0) / (lambda3 * lambda3 + 2 * alpha * lambda3 + w0sq);
  const pc = v0 - s;
  const qc = (v1 + alpha * pc - lambda3 * s) / wd;
  return { alpha_per_s: alpha, wd_rad_s: wd, p_v: pc, q_v: qc, s_v: s, lambda3_per_s: lambda3, offset_v: vEq };
}

/** Solves the 3x3 system m x = r by Cramer's rule (the matrices here are tiny and well scaled per row). */
function solve3(m: number[][], r: number[]): number[] {
  const det = (q: number[][]) =>
    q[0][0] * (q[1][1] * q[2][2] - q[1][2] * q[2][1]) - q[0][1] * (q[1][0] * q[2][2] - q[1][2] * q[2][0]) + q[0][2] * (q[1][0] * q[2][1] - q[1][1] * q[2][0]);
  const d = det(m);
  return [0, 1, 2].map((k) => det(m.map((row, i) => row.map((v, j) => (j === k ? r[i] : v)))) / d);
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
 * State when the switch opens after closing it for `charge_s`, starting from rest.
 *
 * While the switch conducts, D is held at the diode drop plus Ron times the current, so the
 * switch-node capacitance is out of the circuit and the part with its tank forms a parallel
 * tank fed from the supply through R + Ron:
 *   L di/dt    = v_TD - Rs i
 *   C dv_TD/dt = (V - Vf - v_TD) / (R + Ron) - i - v_TD / Rp
 * This is itself resonant: the inductor current rings about its final value with the decay
 * Rs/(2L) + 1/(2 (R+Ron) C) and can overshoot it by up to 2x, so it is solved exactly
 * (2x2 matrix exponential) rather than as a plain L/R rise.
 */
export function stateAtOpening(c: FrontEndCircuit, switch_on_ohm: number, diode_v: number, charge_s: number): InitialState {
  const rc = c.r_ohm + switch_on_ohm;
  const gp = Number.isFinite(c.rp_ohm) ? 1 / c.rp_ohm : 0;
  const drive_v = Math.max(c.supply_v - diode_v, 0);
  const a11 = -c.rs_ohm / c.l_h, a12 = 1 / c.l_h;
  const a21 = -1 / c.c_f, a22 = -1 / (rc * c.c_f) - gp / c.c_f;
  // Equilibrium: v = Rs i and (drive - v)/rc = i + v gp.
  const i_eq = drive_v / (rc + c.rs_ohm + rc * c.rs_ohm * gp);
  const v_eq = c.rs_ohm * i_eq;
  const e = expm2(a11, a12, a21, a22, charge_s);
  const y0 = [-i_eq, -v_eq]; // start from rest: i = 0, v_TD = 0
  const i = i_eq + e[0] * y0[0] + e[1] * y0[1];
  const v = v_eq + e[2] * y0[0] + e[3] * y0[1];
  const i_switch = (drive_v - v) / rc;
  return { i_a: i, v_td_v: v, v_d_v: diode_v + switch_on_ohm * i_switch };
}

/**
 * exp(A t) of a real 2x2 matrix [[a, b], [c, d]], row-major, in closed form:
 * exp(A t) = e^(m t) [ (ch - m sh) I + sh A ], m = tr/2, with ch = cosh(k t), sh = sinh(k t)/k and
 * k^2 = m^2 - det (cos and sin for k^2 < 0; the k -> 0 limit is ch = 1, sh = t).
 */
export function expm2(a: number, b: number, c: number, d: number, t: number): [number, number, number, number] {
  const m = 0.5 * (a + d);
  const det = a * d - b * c;
  const k2 = m * m - det;
  let ch: number, sh: number;
  const scale = Math.abs(k2) * t * t;
  if (scale < 1e-12) {
    ch = 1 + 0.5 * k2 * t * t;
    sh = t * (1 + (k2 * t * t) / 6);
  } else if (k2 > 0) {
    const k = Math.sqrt(k2);
    // e^(m t) cosh(k t) overflows separately for stiff systems; combine the exponents.
    const ep = Math.exp((m + k) * t);
    const em = Math.exp((m - k) * t);
    const ch_e = 0.5 * (ep + em);
    const sh_e = (0.5 * (ep - em)) / k;
    return [ch_e - m * sh_e + sh_e * a, sh_e * b, sh_e * c, ch_e - m * sh_e + sh_e * d];
  } else {
    const w = Math.sqrt(-k2);
    ch = Math.cos(w * t);
    sh = Math.sin(w * t) / w;
  }
  const g = Math.exp(m * t);
  return [g * (ch - m * sh + sh * a), g * sh * b, g * sh * c, g * (ch - m * sh + sh * d)];
}
