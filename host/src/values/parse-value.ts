// Values as the trade writes them: SI prefixes (`4.7uH`, `4.7 µH`, `4.7e-6`) and the IEC 60062
// letter-and-digit code, where the multiplier letter stands in for the decimal point (`4u7`,
// `330u`, `1m5`, `4K7`, `4R7`), optionally followed by a tolerance letter (`4u7J`, `330uK`).
// Pure: no I/O.

import { TOLERANCE_LETTERS } from "./tolerance-letters.ts";

/** A text that is not a value (a RangeError: a bad argument); `code` is stable, the message says how to write one. */
export class ValueSyntaxError extends RangeError {
  readonly code = "BAD_VALUE";
  constructor(readonly text: string, why: string) {
    super(`cannot read "${text}" as a value: ${why}; write it like 4.7u, 4u7, 4.7 µH or 4.7e-6`);
    this.name = "ValueSyntaxError";
  }
}

// `R` is IEC 60062's "no multiplier" letter. Case matters: `m` is milli, `M` mega; IEC 60062 also
// writes kilo as `K` inside a code (`4K7`), so `K` means kilo unless it ends a code after a
// multiplier (`330uK` = 330 µ, tolerance K).
const MULTIPLIERS: Record<string, number> = {
  p: 1e-12, n: 1e-9, u: 1e-6, "µ": 1e-6, "μ": 1e-6, m: 1e-3, R: 1, k: 1e3, K: 1e3, M: 1e6, G: 1e9,
};

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

/**
 * Reads a value in `unit` (default henries). The unit may be written or left out; a tolerance
 * letter may end an IEC 60062 code. Throws ValueSyntaxError for anything else.
 */
export function parseValue(text: string, unit = "H"): ParsedValue {
  let s = text.trim().replace(/\s+/g, " ");
  let sign = 1;
  if (s.startsWith("-") || s.startsWith("+")) {
    sign = s[0] === "-" ? -1 : 1;
    s = s.slice(1).trim();
  }
  if (s === "") throw new ValueSyntaxError(text, "it is empty");
  let letter: string | undefined;
  const tol = splitToleranceLetter(s, unit);
  if (tol) [s, letter] = tol;
  if (unit && s.endsWith(unit)) s = s.slice(0, -unit.length).trim();
  const value = readMagnitude(s);
  if (value === null) throw new ValueSyntaxError(text, "it is neither a number with an SI prefix nor an IEC 60062 code");
  const out: ParsedValue = { value: sign * value };
  if (letter) {
    out.toleranceLetter = letter;
    out.tolerance_rel = TOLERANCE_LETTERS[letter];
  }
  return out;
}

function readMagnitude(s: string): number | null {
  const plain = PLAIN.exec(s);
  if (plain) return Number(plain[1]) * (plain[2] ? MULTIPLIERS[plain[2]] : 1);
  const code = CODE.exec(s);
  if (code) return Number(`${code[1]}.${code[3]}`) * MULTIPLIERS[code[2]];
  return null;
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
  if (readMagnitude(withoutUnit) === null) return null;
  rest = withoutUnit;
  return [rest, last];
}
