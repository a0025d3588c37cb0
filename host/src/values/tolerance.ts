// Tolerances: IEC 60062 letters, percentages and absolute half-widths,
// symmetric or not, and the limits they put around a nominal value. Pure: no I/O.

import { formatValue } from "./format-value.ts";
import { parseValue, ValueError, ValueSyntaxError } from "./parse-value.ts";
import { TOLERANCE_LETTERS } from "./tolerance-letters.ts";

export { TOLERANCE_LETTERS };


/** How far below and above nominal a part may lie; relative or in the value's unit. */
export type Tolerance =
  | { kind: "relative"; below_rel: number; above_rel: number; text: string }
  | { kind: "absolute"; below: number; above: number; text: string };

export interface Limits {
  lower: number;
  upper: number;
}

/**
 * Reads `5%`, `±5 %`, `J`, `+10%/-5%`, `0.5u` (absolute, symmetric) or `+1u/-0.5u`.
 * Throws ValueSyntaxError with a next step for anything else.
 */
export function parseTolerance(text: string, unit = "H"): Tolerance {
  const s = text.trim().replace(/^±/, "").replace(/^\+-/, "").trim();
  if (s in TOLERANCE_LETTERS) {
    const r = TOLERANCE_LETTERS[s];
    return { kind: "relative", below_rel: r, above_rel: r, text: `±${r * 100} % (${s})` };
  }
  const asym = /^\+([^/]+)\/\s*-(.+)$/.exec(s);
  if (asym) {
    const up = parseOneSide(asym[1], unit, text);
    const down = parseOneSide(asym[2], unit, text);
    if (up.kind !== down.kind) throw new ValueSyntaxError(text, "write both sides in % or both in the unit");
    return up.kind === "relative"
      ? { kind: "relative", below_rel: down.v, above_rel: up.v, text: `+${up.v * 100} %/−${down.v * 100} %` }
      : { kind: "absolute", below: down.v, above: up.v, text: `+${formatValue(up.v, unit)}/−${formatValue(down.v, unit)}` };
  }
  const one = parseOneSide(s, unit, text);
  return one.kind === "relative"
    ? { kind: "relative", below_rel: one.v, above_rel: one.v, text: `±${round(one.v * 100)} %` }
    : { kind: "absolute", below: one.v, above: one.v, text: `±${formatValue(one.v, unit)}` };
}

function parseOneSide(s: string, unit: string, whole: string): { kind: "relative" | "absolute"; v: number; raw: string } {
  const t = s.trim();
  const pct = /^(\d+(?:\.\d*)?|\.\d+)\s*%$/.exec(t);
  if (pct) {
    const v = Number(pct[1]) / 100;
    if (!(v > 0 && v < 1)) throw new ValueSyntaxError(whole, "a percentage tolerance must be above 0 % and below 100 %");
    return { kind: "relative", v, raw: t };
  }
  // A bare number could be a fraction (0.05), a percentage without its sign (5) or a value
  // without its prefix (0.5 µH): refuse it and show each way to write it.
  if (/^(\d+(?:\.\d*)?|\.\d+)$/.test(t)) {
    const frac = Number(t) < 1 ? `, ${Number((Number(t) * 100).toPrecision(6))}% (${t} as a fraction)` : "";
    throw new ValueError("AMBIGUOUS_VALUE", whole, `tolerance "${whole}" has no unit: a relative tolerance is written 5%, ${t}%${frac}, an absolute one ${t}u (±${t} µ${unit})`);
  }
  let v: number;
  try {
    v = parseValue(t, unit).value;
  } catch (e) {
    if (e instanceof ValueError && e.code === "WRONG_UNIT") throw e;
    throw new ValueSyntaxError(whole, "a tolerance is a percentage (5%), an IEC 60062 letter (B C D F G J K M) or a value (0.5u)", "5%, J, +10%/-5% or 0.5u");
  }
  if (!(v > 0)) throw new ValueSyntaxError(whole, "a tolerance must be greater than zero");
  return { kind: "absolute", v, raw: t };
}

function round(x: number): number {
  return Math.round(x * 1e9) / 1e9;
}

/** Lower and upper specification limits around `nominal`. */
export function toleranceLimits(nominal: number, tol: Tolerance, unit = "H"): Limits {
  if (tol.kind === "relative") return { lower: nominal * (1 - tol.below_rel), upper: nominal * (1 + tol.above_rel) };
  if (tol.below >= nominal) {
    throw new ValueError("OUT_OF_RANGE", tol.text, `tolerance ${tol.text} reaches below zero for a nominal of ${formatValue(nominal, unit)}: an absolute tolerance must be smaller than the nominal (a relative one is written 5%)`);
  }
  return { lower: nominal - tol.below, upper: nominal + tol.above };
}
