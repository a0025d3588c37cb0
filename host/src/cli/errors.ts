// Maps errors to one line on stderr and an exit status (docs/user-guide.md, "exit status"):
// 1 for every coded error (no reading, a device or file problem), 2 for usage errors only (a
// CliUsageError, or a value the user typed that cannot be read: BAD_VALUE), 70 for anything the
// program did not expect (an uncoded TypeError or RangeError is a bug, never the user's usage).
// Errors a user can meet carry a code.

import { sanitizeForTerminal } from "../workflows/terminal.ts";

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

const say = (line: string) => process.stderr.write(`henrytick: ${sanitizeForTerminal(line)}\n`);

const PROGRAMMING_ERRORS = [TypeError, RangeError, ReferenceError, SyntaxError, EvalError, URIError];

export function reportError(e: unknown): number {
  if (e instanceof CliUsageError) {
    say(e.message);
    process.stderr.write(`Run "henrytick --help" for usage.\n`);
    return EXIT_USAGE;
  }
  const code = e instanceof Error ? (e as { code?: unknown }).code : undefined;
  if (code === "BAD_VALUE") {
    say(`[BAD_VALUE] ${(e as Error).message}`);
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
