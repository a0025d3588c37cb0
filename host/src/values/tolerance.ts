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

/**
 * The tolerance of a nominal written with a tolerance letter (`10uH F`, `4u7J`) and a tolerance
 * given beside it: either one alone, or both when they agree. Two that differ are refused
 * (TOLERANCE_CONFLICT) rather than one dropped. Undefined when neither is given.
 */
export function nominalTolerance(nominal: { toleranceLetter?: string }, given?: Tolerance): Tolerance | undefined {
  const letter = nominal.toleranceLetter;
  if (!letter) return given;
  const fromLetter = parseTolerance(letter);
  if (!given) return fromLetter;
  const same = (a: number, b: number) => Math.abs(a - b) <= 1e-12;
  if (given.kind === "relative" && fromLetter.kind === "relative" && same(given.below_rel, fromLetter.below_rel) && same(given.above_rel, fromLetter.above_rel)) return given;
  throw new ValueError("TOLERANCE_CONFLICT", letter, `the nominal ends in the tolerance letter ${letter} (±${Number((TOLERANCE_LETTERS[letter] * 100).toPrecision(6))} %) but the tolerance given is ${given.text}: give the tolerance once`);
}

function round(x: number): number {
  return Math.round(x * 1e9) / 1e9;
}

/**
 * Significant digits of a specification limit: enough for any tolerance a part is marked with
 * (a limit is exact in decimal, 9.5 µH), few enough to drop the binary artefact of the product
 * (10 µH × 0.95 = 9.499999999999999 µH) before it reaches a decision, a log or a message.
 */
export const LIMIT_DIGITS = 12;

const limit = (x: number) => Number(x.toPrecision(LIMIT_DIGITS));

/** Lower and upper specification limits around `nominal`, to LIMIT_DIGITS significant digits. */
export function toleranceLimits(nominal: number, tol: Tolerance, unit = "H"): Limits {
  if (tol.kind === "relative") return { lower: limit(nominal * (1 - tol.below_rel)), upper: limit(nominal * (1 + tol.above_rel)) };
  if (tol.below >= nominal) {
    throw new ValueError("OUT_OF_RANGE", tol.text, `tolerance ${tol.text} reaches below zero for a nominal of ${formatValue(nominal, unit)}: an absolute tolerance must be smaller than the nominal (a relative one is written 5%)`);
  }
  return { lower: limit(nominal - tol.below), upper: limit(nominal + tol.above) };
}
