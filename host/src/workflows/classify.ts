// Classifying a reading against a tolerance in one call, for bench applications: values may be
// given as the trade writes them ("10u", "4u7J", "5%", "K") or as numbers. Pure: no I/O.

import { parseValue } from "../values/parse-value.ts";
import { nominalTolerance, parseTolerance, toleranceLimits, type Limits, type Tolerance } from "../values/tolerance.ts";
import { decideConformity, type Decision } from "./conformity.ts";

export interface ToleranceSpec {
  /** Nominal inductance: henries, or text such as "10u", "4u7", "4u7J" (letter = tolerance). */
  nominal: number | string;
  /** "5%", "J", "+10%/-5%", "0.5u", or a relative fraction (0.05). Optional when nominal has a letter. */
  tolerance?: number | string;
}

export interface Classification {
  decision: Decision;
  p_conform: number;
  limits: Limits;
  /** The guard-banded acceptance zone (limits shrunk by U). */
  acceptance: Limits;
  nominal_h: number;
}

/** ISO 14253-1 decision for a reading (`inductance_h` ± `inductance_u_h`, k = 2). */
export function classify(reading: { inductance_h: number; inductance_u_h: number }, spec: ToleranceSpec): Classification {
  const parsed = typeof spec.nominal === "number" ? { value: spec.nominal, toleranceLetter: undefined } : parseValue(spec.nominal);
  const nominal_h = parsed.value;
  let tol: Tolerance | undefined;
  if (typeof spec.tolerance === "number") {
    if (!(spec.tolerance > 0 && spec.tolerance < 1)) throw new RangeError(`tolerance: a relative tolerance lies between 0 and 1, got ${spec.tolerance}`);
    tol = { kind: "relative", below_rel: spec.tolerance, above_rel: spec.tolerance, text: `±${spec.tolerance * 100} %` };
  } else if (typeof spec.tolerance === "string") tol = parseTolerance(spec.tolerance);
  if (parsed.toleranceLetter) tol = nominalTolerance(parsed, tol);
  if (!tol) throw new TypeError('tolerance: give a tolerance ("5%", "J", 0.05) or a letter on the nominal ("10uJ")');
  const limits = toleranceLimits(nominal_h, tol);
  const c = decideConformity(reading.inductance_h, reading.inductance_u_h, limits);
  return { decision: c.decision, p_conform: c.p_conform, limits, acceptance: c.acceptance, nominal_h };
}
