// Maps errors to one line on stderr and an exit status (docs/user-guide.md, "exit status"):
// 1 for every coded error (no reading, a device or file problem), 2 for usage errors only (a
// CliUsageError, or a value the user typed that cannot be read: a coded RangeError such as
// BAD_VALUE), 70 for anything the
// program did not expect (an uncoded TypeError or RangeError is a bug, never the user's usage).
// Errors a user can meet carry a code.

// Every string written to stdout and stderr also passes the one terminal sanitiser below: labels,
// tester ids, file names and messages from files and testers can hold control characters (clear
// screen, window-title and cursor sequences, a carriage return that overwrites a line,
// bidirectional overrides that reorder it); each is shown as a visible stand-in instead.

import { randomBytes } from "node:crypto";

export const EXIT_OK = 0;
export const EXIT_FAILED = 1;
export const EXIT_USAGE = 2;
/** EX_SOFTWARE of BSD sysexits.h: an internal software error. */
export const EXIT_INTERNAL = 70;

export class CliUsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "CliUsageError";
  }
}

const say = (line: string) => process.stderr.write(`henrytick: ${sanitizeForTerminal(cliWording(line))}\n`);

const PROGRAMMING_ERRORS = [TypeError, RangeError, ReferenceError, SyntaxError, EvalError, URIError];

export function reportError(e: unknown): number {
  if (e instanceof CliUsageError) {
    say(e.message);
    process.stderr.write(`Run "henrytick --help" for usage.\n`);
    return EXIT_USAGE;
  }
  const code = e instanceof Error ? (e as { code?: unknown }).code : undefined;
  // A coded RangeError is a value the user typed (ValueError: BAD_VALUE, WRONG_UNIT, AMBIGUOUS_VALUE, …).
  if (e instanceof RangeError && typeof code === "string") {
    say(`[${code}] ${e.message}`);
    process.stderr.write(`Run "henrytick --help" for usage.\n`);
    return EXIT_USAGE;
  }
  if (e instanceof Error && typeof code === "string") {
    say(`[${code}] ${e.message}`);
    if (process.env.HENRYTICK_DEBUG) process.stderr.write(`${e.stack}\n`);
    return EXIT_FAILED;
  }
  if (e instanceof Error && PROGRAMMING_ERRORS.some((k) => e instanceof k)) {
    say(`internal error: ${e.name}: ${e.message}; please report it with the output of the same command run with HENRYTICK_DEBUG=1`);
    if (process.env.HENRYTICK_DEBUG) process.stderr.write(`${e.stack}\n`);
    return EXIT_INTERNAL;
  }
  if (e instanceof Error) {
    say(e.message);
    if (process.env.HENRYTICK_DEBUG) process.stderr.write(`${e.stack}\n`);
    return EXIT_FAILED;
  }
  say(String(e));
  return EXIT_FAILED;
}

/**
 * A write to stdout or stderr failed (`> /dev/full`, a closed pipe). A reader that went away
 * (EPIPE) ends the command quietly with the status so far; any other failure is OUTPUT_FAILED on
 * stderr (when stderr still works), exit status 1. Returns the status to exit with.
 */
export function outputStreamError(err: unknown, stream: "stdout" | "stderr", statusSoFar: number | undefined): number {
  const code = (err as NodeJS.ErrnoException | undefined)?.code;
  if (code === "EPIPE") return statusSoFar ?? EXIT_OK;
  if (stream === "stdout") {
    const why = code === "ENOSPC" ? "no space left on the device" : code === "EDQUOT" ? "disk quota exceeded" : code === "EFBIG" ? "file too large" : "the write failed";
    try {
      process.stderr.write(`henrytick: [OUTPUT_FAILED] cannot write the output (${code ?? "error"}: ${why}); free some space or send the output elsewhere, and run the command again\n`);
    } catch {
      // stderr is gone too: the status says it
    }
  }
  return EXIT_FAILED;
}

/** C0 controls but tab and newline, DEL, C1 controls, bidirectional embedding/override/isolate marks. */
const UNSAFE = /[\x00-\x08\x0a-\x1f\x7f\x80-\x9f\u202a-\u202e\u2066-\u2069\u200e\u200f\u061c]/;

function standIn(c: string): string {
  const k = c.charCodeAt(0);
  if (k < 0x20) return String.fromCharCode(0x2400 + k); // Unicode control pictures: ␛ ␍ ␇ …
  // DEL, C1 and bidirectional controls as a JSON-style escape: readable on a terminal, and inside
  // a JSON string (which JSON.stringify leaves them raw in) it decodes back to the same character.
  return `\\u${k.toString(16).padStart(4, "0")}`;
}

/**
 * Text safe to print on a terminal: every control character except tab and (unless `oneLine`)
 * newline becomes a visible stand-in: C0 controls as their control pictures (ESC → ␛, CR → ␍),
 * DEL, C1 and bidirectional controls as \uXXXX (U+202E → "\u202e").
 */
export function sanitizeForTerminal(text: string, opts: { oneLine?: boolean } = {}): string {
  let out = "";
  for (const c of text) {
    if (c === "\n") out += opts.oneLine ? "\u2424" : c; // ␤
    else if (UNSAFE.test(c)) out += standIn(c);
    else out += c;
  }
  return out;
}

/**
 * On a guarded stream the program's own escape sequences (colours, measure-watch's redraw) are
 * written with this per-process random mark in place of ESC; the guard turns the mark back into
 * ESC after sanitising, so text from a file cannot forge one (it cannot know the mark).
 */
const OWN_ESC = `\ue000${randomBytes(12).toString("base64url")}\ue001`;

type Guarded = { __henrytickGuarded?: boolean };
const isGuarded = (stream: unknown) => (stream as Guarded | undefined)?.__henrytickGuarded === true;

/** The escape character for this program's own sequences on `stream`. */
export function ownEsc(stream: unknown = process.stdout): string {
  return isGuarded(stream) ? OWN_ESC : "\x1b";
}

/** Moves the cursor up `lines` lines and erases below (redrawing a block in place). */
export function eraseUp(lines: number, stream: unknown = process.stdout): string {
  const e = ownEsc(stream);
  return `${e}[${Math.max(1, Math.floor(lines))}F${e}[J`;
}

/**
 * Makes every string written to `stream` pass through the sanitiser; only this program's own
 * escape sequences (written with `ownEsc`) survive. One guard for all printers, however the text
 * was assembled. Idempotent.
 */
export function guardOutput(stream: NodeJS.WriteStream): void {
  if (isGuarded(stream)) return;
  (stream as Guarded).__henrytickGuarded = true;
  const write = stream.write.bind(stream) as (...args: unknown[]) => boolean;
  (stream as { write: unknown }).write = (chunk: unknown, ...rest: unknown[]) =>
    write(typeof chunk === "string" ? sanitizeForTerminal(chunk).split(OWN_ESC).join("\x1b") : chunk, ...rest);
}

/**
 * Library messages name the library's options (max_peak_v, charge_us, …): they are what a
 * program calling the library sets. On the command line the same step is an option flag, so
 * every message the CLI prints passes through this table.
 */
const LIBRARY_OPTIONS: [RegExp, string][] = [
  [/\bmax_peak_v\b/g, "--max-peak-v"],
  [/\bcharge_us\b/g, "--charge-us"],
  [/\bhazardous_ok\b/g, "--hazardous-ok"],
  [/\bkeep_suspect\b/g, "--keep-suspect"],
  [/\bother_winding_ratio\b/g, "--winding-ratio"],
  [/\btest_frequency_hz\b/g, "--freq"],
  [/\(options drive, tank unset\)/g, "(no --drive or --tank)"],
  [/with the profile left out \(uncalibrated\)/g, "with --uncalibrated"],
  [/give the logs another name/g, "give another --log name"],
  [/give the port's path directly, e\.g\. /g, "give the port's path directly with --port, e.g. "],
  [/a capture file a measurement saved/g, 'a file written by "henrytick measure --save"'],
  [/\(the profile's timebase entry, ppm and u_ppm\)/g, "(calibrate timebase --ppm P --u-ppm U)"],
];

/** A library message in the command line's terms: option names become the flags that set them. */
export function cliWording(message: string): string {
  let m = message;
  for (const [re, flag] of LIBRARY_OPTIONS) m = m.replace(re, flag);
  return m;
}
