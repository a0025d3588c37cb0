// Small terminal helpers shared by the workflow commands: colour only on a terminal and never
// when NO_COLOR is set (https://no-color.org), input lines from stdin that end cleanly at end of
// input so scripted sessions never wait on a terminal, and (from cli/errors.ts) the one sanitiser
// for text that reaches the terminal.

import { createInterface } from "node:readline";
import { ownEsc } from "../cli/errors.ts";

// The one sanitiser for terminal text lives beside the error printer, which the CLI loads first.
export { eraseUp, guardOutput, ownEsc, sanitizeForTerminal } from "../cli/errors.ts";

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

/**
 * Lines typed or piped on stdin; prompts go to stderr only when stdin is a terminal. An abort
 * (Ctrl-C in a session waiting for Enter) ends the lines at once, the wait for the next included.
 */
export async function* stdinLines(prompt?: string, signal?: AbortSignal): AsyncGenerator<string> {
  const rl = createInterface({ input: process.stdin, terminal: false });
  const ask = () => {
    if (prompt && process.stdin.isTTY) process.stderr.write(prompt);
  };
  const onAbort = () => rl.close();
  if (signal?.aborted) return rl.close();
  signal?.addEventListener("abort", onAbort, { once: true });
  try {
    ask();
    for await (const line of rl) {
      yield line;
      ask();
    }
  } finally {
    signal?.removeEventListener("abort", onAbort);
    rl.close();
  }
}

