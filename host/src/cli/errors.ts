// Maps errors to one line on stderr and an exit status. Errors a user can meet carry a code.

export class CliUsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "CliUsageError";
  }
}

export function reportError(e: unknown): number {
  if (e instanceof CliUsageError) {
    process.stderr.write(`henrytick: ${e.message}\nRun "henrytick --help" for usage.\n`);
    return 2;
  }
  if (e instanceof TypeError || e instanceof RangeError) {
    process.stderr.write(`henrytick: ${e.message}\n`);
    return 2;
  }
  if (e instanceof Error) {
    const code = (e as { code?: unknown }).code;
    process.stderr.write(`henrytick: ${typeof code === "string" ? `[${code}] ` : ""}${e.message}\n`);
    if (process.env.HENRYTICK_DEBUG) process.stderr.write(`${e.stack}\n`);
    return 1;
  }
  process.stderr.write(`henrytick: ${String(e)}\n`);
  return 1;
}
