// Values out: engineering prefixes with as many digits as the uncertainty supports, and the
// IEC 60062 letter-and-digit code for a value. Pure: no I/O.

import { formatSi, formatWithUncertainty } from "../format/si.ts";

/**
 * `10.42 µH ± 0.10 µH` with the uncertainty to two significant digits and the value to the same
 * decimal place (JCGM 100:2008 §7.2.6). Without a usable uncertainty, four significant digits.
 */
export function formatMeasured(value: number, u_expanded: number | undefined, unit: string): string {
  if (u_expanded === undefined || !(u_expanded > 0) || !Number.isFinite(u_expanded)) return formatSi(value, unit, 4);
  const f = formatWithUncertainty(value, u_expanded, unit);
  return `${f.value} ${f.unit} ± ${f.u} ${f.unit}`;
}

/** Just the value part of formatMeasured: `10.42 µH`. */
export function formatValueOnly(value: number, u_expanded: number | undefined, unit: string): string {
  if (u_expanded === undefined || !(u_expanded > 0) || !Number.isFinite(u_expanded)) return formatSi(value, unit, 4);
  const f = formatWithUncertainty(value, u_expanded, unit);
  return `${f.value} ${f.unit}`;
}

const CODE_LETTERS: [number, string][] = [[1e9, "G"], [1e6, "M"], [1e3, "k"], [1, "R"], [1e-3, "m"], [1e-6, "u"], [1e-9, "n"], [1e-12, "p"]];

/**
 * IEC 60062 letter-and-digit code, `digits` significant figures: 4.7e-6 → `4u7`, 3.3e-4 →
 * `330u`, 1.5e-3 → `1m5`. Trailing zeros after the letter are dropped.
 */
export function iecCode(value: number, digits = 2): string {
  if (!(value > 0) || !Number.isFinite(value)) throw new RangeError(`an IEC 60062 code needs a positive value, got ${value}`);
  const rounded = Number(value.toPrecision(digits));
  let [scale, letter] = CODE_LETTERS[CODE_LETTERS.length - 1];
  for (const c of CODE_LETTERS) {
    if (rounded >= c[0] * (1 - 1e-12)) {
      [scale, letter] = c;
      break;
    }
  }
  const scaled = Number((rounded / scale).toPrecision(digits));
  const [int, frac = ""] = String(scaled).split(".");
  return `${int}${letter}${frac}`;
}

/**
 * A value in a message or a log line: SI prefix, up to `digits` significant digits, trailing
 * zeros dropped (4.7 µH, 10 µH, 1.0276 pF, 20.16 V). The one formatter for values outside a
 * measured result (which uses formatMeasured).
 */
export function formatValue(value: number, unit: string, digits = 4): string {
  if (!Number.isFinite(value)) return `${value} ${unit}`.trim();
  const s = formatSi(value, unit, digits);
  return s.replace(/^(-?\d+)\.(\d*?)0+(?= )/, (_m, int: string, frac: string) => (frac ? `${int}.${frac}` : int)).trim();
}

/** A relative figure as a percentage with sensible digits: 0.05 → "5 %", 0.0025 → "0.25 %". */
export function formatPercent(rel: number, digits = 3): string {
  return `${Number((rel * 100).toPrecision(digits))} %`;
}
