// Winding to a target inductance. For a coil whose geometry stays fixed, L = a N^2; a real
// winding grows longer (or deeper) with every turn, so the exponent drifts from 2. The model
// here is L = a N^b, fitted in logs by weighted least squares over every reading so far, with b
// held near 2 by a prior (b ~ N(2, 0.35²)): one reading gives the pure N² rule, more readings
// let the data move b. Common bench practice, no source; the prior width is our choice.
// Pure: no I/O.

import type { Limits } from "../values/tolerance.ts";
import { decideConformity, type Decision } from "./conformity.ts";

export interface WindingReading {
  turns: number;
  inductance_h: number;
  /** Expanded uncertainty (k = 2). */
  inductance_u_h: number;
}

export interface WindingModel {
  a_h: number;
  exponent: number;
  /** Standard uncertainty of the exponent. */
  exponent_u: number;
  readings: number;
  /** Covariance of (ln a, b). */
  cov: [number, number, number];
}

export interface WindingAdvice {
  model: WindingModel;
  /** Turns the model says give the target exactly (fractional). */
  turns_for_target: number;
  /** Expanded uncertainty (k = 2) of turns_for_target from the fit. */
  turns_for_target_u: number;
  /** Nearest whole number of turns, and the change from the last reading's count. */
  recommended_turns: number;
  turns_to_change: number;
  predicted_h: number;
  /** Predictions one turn either side of the recommendation. */
  neighbours: { turns: number; predicted_h: number }[];
  last: { turns: number; inductance_h: number; inductance_u_h: number; error_rel: number; decision?: Decision };
  /** How far the advice reaches beyond what was measured, and whether it leaves the former. */
  reach: WindingReach;
}

export interface WindingReach {
  /** Fewest and most turns measured so far. */
  measured_turns: [number, number];
  /**
   * turns_for_target over the nearest measured count (above 1: beyond the readings on either
   * side; 1 inside them). Beyond FAR_EXTRAPOLATION the fitted exponent is a guess there.
   */
  extrapolation: number;
  /** The turns the former takes, when known (the simulated former; a real one if given). */
  former_turns?: { min: number; max: number };
  /** Why the advice should not be followed as it stands: null when it can be. */
  concern: null | "beyond-former" | "far-extrapolation";
}

/**
 * Advice more than this factor in turns beyond the measured counts (4× in inductance at N²) is
 * an extrapolation of the fitted exponent: wind part of the way and measure again. Common bench
 * practice, no source; the factor is our choice.
 */
export const FAR_EXTRAPOLATION = 2;

const PRIOR_EXPONENT = 2;
const PRIOR_EXPONENT_SD = 0.35;
/** Relative scatter of the power law itself around a real coil (a turn never lies perfectly). */
const MODEL_REL_SD = 0.002;

export function fitWindingModel(readings: readonly WindingReading[]): WindingModel {
  if (readings.length === 0) throw new RangeError("winding advice needs at least one reading");
  let sw = 0, swx = 0, swy = 0, swxx = 0, swxy = 0;
  for (const r of readings) {
    if (!(r.turns > 0) || !(r.inductance_h > 0)) throw new RangeError(`turns and inductance must be positive, got ${r.turns} turns, ${r.inductance_h} H`);
    const relU = r.inductance_u_h > 0 ? r.inductance_u_h / 2 / r.inductance_h : 0;
    const w = 1 / (relU * relU + MODEL_REL_SD * MODEL_REL_SD);
    const x = Math.log(r.turns);
    const y = Math.log(r.inductance_h);
    sw += w; swx += w * x; swy += w * y; swxx += w * x * x; swxy += w * x * y;
  }
  const p = 1 / (PRIOR_EXPONENT_SD * PRIOR_EXPONENT_SD);
  // Normal equations for (c = ln a, b) with the prior on b added to the b-b entry.
  const h11 = sw, h12 = swx, h22 = swxx + p;
  const g1 = swy, g2 = swxy + p * PRIOR_EXPONENT;
  const det = h11 * h22 - h12 * h12;
  const c = (g1 * h22 - g2 * h12) / det;
  const b = (h11 * g2 - h12 * g1) / det;
  const cov: [number, number, number] = [h22 / det, -h12 / det, h11 / det];
  return { a_h: Math.exp(c), exponent: b, exponent_u: Math.sqrt(cov[2]), readings: readings.length, cov };
}

export function predictInductance(m: WindingModel, turns: number): number {
  return m.a_h * turns ** m.exponent;
}

/** Advice after the latest reading (the last element of `readings`). */
export function windingAdvice(readings: readonly WindingReading[], target_h: number, targetLimits?: Limits, former_turns?: { min: number; max: number }): WindingAdvice {
  if (!(target_h > 0)) throw new RangeError(`target must be a positive inductance, got ${target_h}`);
  const m = fitWindingModel(readings);
  const lnA = Math.log(m.a_h);
  const lnN = (Math.log(target_h) - lnA) / m.exponent;
  const turns = Math.exp(lnN);
  // d lnN / d(ln a) = -1/b, d lnN / d b = -lnN / b.
  const ga = -1 / m.exponent;
  const gb = -lnN / m.exponent;
  const varLnN = ga * ga * m.cov[0] + 2 * ga * gb * m.cov[1] + gb * gb * m.cov[2];
  const last = readings[readings.length - 1];
  const recommended = Math.max(1, Math.round(turns));
  const neighbours = [recommended - 1, recommended + 1].filter((n) => n >= 1).map((n) => ({ turns: n, predicted_h: predictInductance(m, n) }));
  const counts = readings.map((r) => r.turns);
  const lo = Math.min(...counts);
  const hi = Math.max(...counts);
  const extrapolation = turns > hi ? turns / hi : turns < lo ? lo / turns : 1;
  const beyondFormer = former_turns !== undefined && (turns < former_turns.min - 0.5 || turns > former_turns.max + 0.5);
  return {
    model: m,
    turns_for_target: turns,
    turns_for_target_u: 2 * turns * Math.sqrt(Math.max(0, varLnN)),
    recommended_turns: recommended,
    turns_to_change: recommended - last.turns,
    predicted_h: predictInductance(m, recommended),
    neighbours,
    last: {
      ...last,
      error_rel: last.inductance_h / target_h - 1,
      ...(targetLimits ? { decision: decideConformity(last.inductance_h, last.inductance_u_h, targetLimits).decision } : {}),
    },
    reach: {
      measured_turns: [lo, hi],
      extrapolation,
      ...(former_turns ? { former_turns } : {}),
      concern: beyondFormer ? "beyond-former" : extrapolation > FAR_EXTRAPOLATION ? "far-extrapolation" : null,
    },
  };
}
