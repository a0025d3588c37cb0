// Small terminal helpers shared by the workflow commands: colour only on a terminal and never
// when NO_COLOR is set (https://no-color.org), input lines from stdin that end cleanly at end of
// input so scripted sessions never wait on a terminal, and the one sanitiser for text that reaches
// the terminal: labels, tester ids, file names and messages from files and testers can hold control
// characters (clear screen, window-title and cursor sequences, a carriage return that overwrites a
// line, bidirectional overrides that reorder it); every one is shown as a visible stand-in instead.

import { randomBytes } from "node:crypto";
import { createInterface } from "node:readline";

export interface Style {
  good(s: string): string;
  bad(s: string): string;
  unsure(s: string): string;
  dim(s: string): string;
  bold(s: string): string;
}

const plain = (s: string) => s;

export function makeStyle(stream: { isTTY?: boolean } = process.stdout, env: NodeJS.ProcessEnv = process.env): Style {
  const on = stream.isTTY === true && !("NO_COLOR" in env && env.NO_COLOR !== "") && env.TERM !== "dumb";
  if (!on) return { good: plain, bad: plain, unsure: plain, dim: plain, bold: plain };
  const e = ownEsc(stream);
  const sgr = (code: string) => (s: string) => `${e}[${code}m${s}${e}[0m`;
  return { good: sgr("32"), bad: sgr("31"), unsure: sgr("33"), dim: sgr("2"), bold: sgr("1") };
}

/** Lines typed or piped on stdin; prompts go to stderr only when stdin is a terminal. */
export async function* stdinLines(prompt?: string): AsyncGenerator<string> {
  const rl = createInterface({ input: process.stdin, terminal: false });
  const ask = () => {
    if (prompt && process.stdin.isTTY) process.stderr.write(prompt);
  };
  try {
    ask();
    for await (const line of rl) {
      yield line;
      ask();
    }
  } finally {
    rl.close();
  }
}

/** C0 controls but tab and newline, DEL, C1 controls, bidirectional embedding/override/isolate marks. */
const UNSAFE = /[\x00-\x08\x0a-\x1f\x7f\x80-\x9f\u202a-\u202e\u2066-\u2069\u200e\u200f\u061c]/;

function standIn(c: string): string {
  const k = c.charCodeAt(0);
  if (k < 0x20) return String.fromCharCode(0x2400 + k); // Unicode control pictures: ␛ ␍ ␇ …
  if (k === 0x7f) return "\u2421"; // ␡
  return "\ufffd";
}

/**
 * Text safe to print on a terminal: every control character except tab and (unless `oneLine`)
 * newline becomes a visible stand-in (ESC → ␛, CR → ␍, a C1 or bidirectional control → �).
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
