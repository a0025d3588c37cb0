// CSV as RFC 4180 writes it, for every CSV the CLI and the logs produce, with spreadsheet formula
// injection guarded as OWASP's "CSV Injection" page advises: a text cell that starts with = + - @
// tab or carriage return is prefixed with a single quote, so a spreadsheet shows it as text
// instead of evaluating it (a label "=HYPERLINK(…)" or "@SUM(…)" in a capture file stays a label).
// Numbers the program writes are written as numbers, negative ones too: a JavaScript number, or a
// text cell that is entirely one plain decimal number ("-0.25", "-1.5e-6"), cannot be a formula
// and is left alone, so columns of readings stay numeric.

const FORMULA_START = /^[=+\-@\t\r]/;
const PLAIN_NUMBER = /^[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?$/;

/** A text cell as a spreadsheet will take it: formula starts guarded with a leading quote. */
export function guardFormula(s: string): string {
  return FORMULA_START.test(s) && !PLAIN_NUMBER.test(s) ? `'${s}` : s;
}

/** One field: quoted when it holds a comma, quote or line break; null and undefined are empty. */
export function csvField(v: unknown): string {
  const s = v === null || v === undefined ? "" : typeof v === "string" ? guardFormula(v) : String(v);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}
