// The public shapes of the ring-down analysis. Times are seconds, voltages volts, everything SI;
// uncertainties named `_u_` are expanded (k = 2, JCGM 100:2008 §6) unless a field says otherwise.

import { CodedError } from "../coded-error.ts";
import type { AnalysisErrorCode, ReadingBudgetLine, WarningCode } from "../codes.ts";
import type { ComparatorTiming } from "./comparator-timing.ts";

export type { ComparatorTiming } from "./comparator-timing.ts";

export interface RingInput {
  /** Timer tick rate, Hz. */
  tick_hz: number;
  /** Integer ticks since the switch opened, non-decreasing. */
  ticks: ArrayLike<number>;
  /** 1 after a rising edge, 0 after a falling edge. */
  levels: ArrayLike<number>;
  /** Capacitance across the part during the ring, farads. */
  tank_c_f: number;
  /** Standard uncertainty of tank_c_f; default 1 % rectangular, i.e. 0.01 tank_c_f / sqrt(3). */
  tank_c_u_f?: number;
  /** Standard relative uncertainty of tick_hz; default 50 ppm rectangular, 50e-6 / sqrt(3). */
  timebase_u_rel?: number;
  /** [rising, falling] comparator thresholds referred to the ring voltage, volts; rising > falling. */
  thresholds_v: [number, number];
  /**
   * True when the capture ended because the comparator stayed quiet after the last edge (the
   * ring died out), false or absent when it ended on an edge limit or a timeout, or when that is
   * not known. When true, the fit also uses that the ring did not reach the next threshold: with
   * few edges (low Q) this is much of what fixes the decay.
   */
  ring_ended?: boolean;
  /**
   * The comparator's timing beyond its thresholds: rise/fall delay skew (with its uncertainty:
   * from calibration, or the board's prior), the bandwidth of its continuous input noise
   * (first-passage correction) and its overdrive charge (docs/method.md §2a). When given, the
   * edge times are corrected for them and what is not known exactly enters U. When absent the
   * edge model is that of the thresholds alone; a skew the capture shows is then named by the
   * COMPARATOR_SKEW warning.
   */
  comparator?: ComparatorTiming;
}

/** A condition the user should know about; `code` is stable, `message` says what to do next. */
export interface Warning {
  code: WarningCode;
  message: string;
}

export interface RingAnalysis {
  f0_hz: number;
  fd_hz: number;
  alpha_per_s: number;
  inductance_h: number;
  /** Expanded uncertainty, k = 2 (fit, capacitance and timebase combined). */
  inductance_u_h: number;
  q: number;
  /** Expanded uncertainty, k = 2 (fit only: the timebase and C cancel in Q). */
  q_u: number;
  esr_ohm: number;
  esr_u_ohm: number;
  /** Initial ring amplitude A0, volts (scaled by the thresholds' volts). */
  amplitude_v: number;
  /** Expanded uncertainty of f0, k = 2 (fit and timebase). */
  f0_u_hz: number;
  edges_used: number;
  edges_rejected: number;
  rejected: { index: number; reason: string }[];
  warnings: Warning[];
  /** Standard relative contributions to u(L)/L: fit, capacitance, timebase. */
  budget: { name: ReadingBudgetLine; rel_u: number }[];
  /** Estimated noise: timing jitter (s rms) and input-referred voltage noise (V rms). */
  noise: { sigma_t_s: number; sigma_v_v: number };
  /** Relative change of the ring frequency from the strong half to the weak half of the ring. */
  drift?: { df_rel: number; df_rel_u: number };
}

/** Thrown for input that cannot be analysed; `code` is stable, the message says what to do. */
export class AnalysisError extends CodedError<AnalysisErrorCode> {}
