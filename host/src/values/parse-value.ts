// Values as the trade writes them, for every option that takes one: SI prefixes (`4.7uH`,
// `4.7 µH`, `4.7e-6`) and the IEC 60062 letter-and-digit code, where the multiplier letter stands
// in for the decimal point (`4u7`, `330u`, `1m5`, `4K7`), optionally followed by a tolerance
// letter (`4u7J`, `330uK`). Inductances follow the inductor marking practice (common trade
// practice, no source): `R` is the decimal point in microhenries (`4R7` = 4.7 µH, `R47` =
// 0.47 µH) and three bare digits are two figures and a power of ten in microhenries (`100` =
// 10 µH, `471` = 470 µH). Any other bare number is refused for an inductance (henries or
// microhenries? write the prefix), and a value written in another unit (`10uF`) is refused.
// Pure: no I/O.

import { formatValue } from "./format-value.ts";
import { TOLERANCE_LETTERS } from "./tolerance-letters.ts";

import type { VALUE_ERROR_MEANINGS } from "../codes.ts";

export type ValueErrorCode = keyof typeof VALUE_ERROR_MEANINGS;

/** A text that is not a usable value (a RangeError: a bad argument); the message says how to write one. */
export class ValueError extends RangeError {
  constructor(readonly code: ValueErrorCode, readonly text: string, message: string) {
    super(message);
    this.name = "ValueError";
  }
}

/** Not a value at all (`BAD_VALUE`). */
export class ValueSyntaxError extends ValueError {
  constructor(text: string, why: string, example = "4.7u, 4u7, 4.7 µH or 4.7e-6") {
    super("BAD_VALUE", text, `cannot read "${text}" as a value: ${why}; write it like ${example}`);
    this.name = "ValueSyntaxError";
  }
}

// `R` is IEC 60062's "no multiplier" letter (for inductances: µH, the inductor marking). Case
// matters: `m` is milli, `M` mega; IEC 60062 also writes kilo as `K` inside a code (`4K7`), so
// `K` means kilo unless it ends a code after a multiplier (`330uK` = 330 µ, tolerance K).
const MULTIPLIERS: Record<string, number> = {
  f: 1e-15, p: 1e-12, n: 1e-9, u: 1e-6, "µ": 1e-6, "μ": 1e-6, m: 1e-3, R: 1, k: 1e3, K: 1e3, M: 1e6, G: 1e9,
};

/** Units a value may be written in; one of another quantity is refused with the right one named. */
const UNITS: Record<string, string> = { H: "an inductance", F: "a capacitance", "Ω": "a resistance", ohm: "a resistance", V: "a voltage", A: "a current", Hz: "a frequency", W: "a power", s: "a time" };

export interface ParsedValue {
  /** In the base unit (henries for inductance). */
  value: number;
  /** Relative tolerance from a trailing IEC 60062 letter, if one was written. */
  tolerance_rel?: number;
  toleranceLetter?: string;
}

const NUMBER = String.raw`(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?`;
const LETTERS = Object.keys(MULTIPLIERS).join("");
const PLAIN = new RegExp(`^(${NUMBER})\\s*([${LETTERS}]?)$`);
const CODE = new RegExp(`^(\\d+)([${LETTERS}])(\\d+)$`);
/** Inductor marking with R as the decimal point: 4R7, R47, 47R. */
const R_CODE = /^(\d*)R(\d*)$/;
const THREE_DIGITS = /^\d\d\d$/;
const EXPONENT = /[eE][+-]?\d+$/;

const example = (unit: string) => (unit === "H" ? "4.7u, 4u7, 4R7, 4.7 µH or 4.7e-6" : `4.7u, 4u7, 4.7 µ${unit} or 4.7e-6`);

/**
 * Reads a value in `unit` (default henries). The unit may be written or left out; a tolerance
 * letter may end an IEC 60062 code. Throws ValueError: BAD_VALUE for a text that is no value,
 * WRONG_UNIT for a value in another unit, AMBIGUOUS_VALUE for a bare inductance that is neither
 * an inductor code nor in exponent form.
 */
export function parseValue(text: string, unit = "H"): ParsedValue {
  let s = text.trim().replace(/\s+/g, " ");
  let sign = 1;
  if (s.startsWith("-") || s.startsWith("+")) {
    sign = s[0] === "-" ? -1 : 1;
    s = s.slice(1).trim();
  }
  if (s === "") throw new ValueSyntaxError(text, "it is empty", example(unit));
  checkUnit(text, s, unit);
  let letter: string | undefined;
  const tol = splitToleranceLetter(s, unit);
  if (tol) [s, letter] = tol;
  const unitWritten = unit !== "" && s.endsWith(unit);
  if (unitWritten) s = s.slice(0, -unit.length).trim();
  const value = unit === "H" ? readInductance(text, s, unitWritten) : readMagnitude(s);
  if (value === null) throw new ValueSyntaxError(text, "it is neither a number with an SI prefix nor an IEC 60062 code", example(unit));
  const out: ParsedValue = { value: sign * value };
  if (letter) {
    out.toleranceLetter = letter;
    out.tolerance_rel = TOLERANCE_LETTERS[letter];
  }
  return out;
}

/** A value written in another unit than the option takes: `10uF` for an inductance. */
function checkUnit(text: string, s: string, unit: string): void {
  for (const [u, what] of Object.entries(UNITS)) {
    if (u === unit || (unit === "Ω" && u === "ohm")) continue;
    // `F` after a multiplier is also the 1 % tolerance letter; `10uF` (no digit after the letter)
    // is how a capacitance is written, so it is read as farads; `4u7F` stays a code with F.
    const m = new RegExp(`^(${NUMBER})\\s*([${LETTERS.replace("R", "")}]?)\\s*${u}$`).exec(s);
    if (!m) continue;
    if (u === "F" && unit === "H" && m[2] === "") continue; // `10F` cannot be a capacitance typo for an inductance: bare-number rules apply
    const asked = UNITS[unit] ?? `a value in ${unit}`;
    const number = m[2] ? `${m[1]}${m[2]}` : "";
    const write = number ? `${number} or ${number}${unit}` : unit === "H" ? `${m[1]}u or ${m[1]}m` : `${m[1]}${unit}`;
    const tolHint = u === "F" && unit === "H" ? ` (for ±1 % write ${number}${unit} F)` : "";
    throw new ValueError("WRONG_UNIT", text, `"${text}" is ${what} (${u}); this option takes ${asked} (${unit}): write ${write}${tolHint}`);
  }
}

function readInductance(text: string, s: string, unitWritten: boolean): number | null {
  const r = R_CODE.exec(s);
  if (r && (r[1] !== "" || r[2] !== "")) return scaled(`${r[1] || "0"}.${r[2] || "0"}`, 1e-6);
  if (THREE_DIGITS.test(s) && !unitWritten) return scaled(s.slice(0, 2), 10 ** (Number(s[2]) - 6));
  const plain = PLAIN.exec(s);
  if (plain && plain[2] === "" && !unitWritten && !EXPONENT.test(s)) {
    throw new ValueError(
      "AMBIGUOUS_VALUE", text,
      `"${text}" has no prefix: write ${s}u for ${s} µH or ${s}m for ${s} mH (${s}H for henries; three digits such as 100 are read as an inductor code, 100 = 10 µH)`,
    );
  }
  return readMagnitude(s);
}

function readMagnitude(s: string): number | null {
  const plain = PLAIN.exec(s);
  if (plain) return scaled(plain[1], plain[2] ? MULTIPLIERS[plain[2]] : 1);
  const code = CODE.exec(s);
  if (code) return scaled(`${code[1]}.${code[3]}`, MULTIPLIERS[code[2]]);
  return null;
}

/**
 * A decimal number times a power-of-ten multiplier, read as one decimal text (`10` and µ →
 * `10e-6`) so the result is the double nearest the written value: multiplying (10 × 1e-6 =
 * 9.999999999999999e-6) would carry a binary rounding artefact into limits and logs.
 */
function scaled(number: string, multiplier: number): number {
  const [mantissa, exp = "0"] = number.split(/[eE]/);
  return Number(`${mantissa}e${Number(exp) + Math.round(Math.log10(multiplier))}`);
}

/** Splits `4u7J` / `330uK` / `10 µH J` into the value and its tolerance letter. */
function splitToleranceLetter(s: string, unit: string): [string, string] | null {
  const last = s[s.length - 1];
  if (!(last in TOLERANCE_LETTERS)) return null;
  let rest = s.slice(0, -1).trim();
  if (rest === "") return null;
  // A letter right after plain digits is a multiplier (`47K` = 47 k), not a tolerance.
  const withoutUnit = unit && rest.endsWith(unit) ? rest.slice(0, -unit.length).trim() : rest;
  if (/\d$/.test(withoutUnit) && !/[^\d.eE+-]/.test(withoutUnit)) return null;
  if (readMagnitude(withoutUnit) === null && !(unit === "H" && R_CODE.test(withoutUnit))) return null;
  rest = withoutUnit;
  return [rest, last];
}

/**
 * A value for an option, in `unit`, inside [min, max]: out of it is refused (OUT_OF_RANGE) with
 * the range and, for a prefix slip, the likely intended value.
 */
export function parseValueIn(text: string, unit: string, range: { min: number; max: number; what: string }): ParsedValue {
  const p = parseValue(text, unit);
  if (!(p.value >= range.min && p.value <= range.max)) {
    throw new ValueError("OUT_OF_RANGE", text, `${formatValue(p.value, unit)} ("${text}") is outside ${range.what}, ${formatValue(range.min, unit)} to ${formatValue(range.max, unit)}; check the prefix (u = micro, m = milli)`);
  }
  return p;
}
