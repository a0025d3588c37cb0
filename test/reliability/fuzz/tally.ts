// Bookkeeping shared by the fuzz targets. A case ends in one of: accepted (the parser returned a
// value that passed the target's own consistency checks), rejected with a stable code (the error
// class the module documents, carrying `code`), rejected without a code (the right class but no
// code: a finding, counted apart), or a crash (any other exception, a wasm trap, malformed
// output, or an accepted value that breaks an invariant).

export interface Tally {
  target: string;
  cases: number;
  accepted: number;
  rejected: number;
  uncoded: number;
  crashes: number;
  /** Failures of a known, reported kind (docs/reliability.md, "Findings"), kept apart from crashes. */
  known: number;
  codes: Record<string, number>;
  /** First few crashes and uncoded rejections, with the input that caused them. */
  samples: string[];
}

export function newTally(target: string): Tally {
  return { target, cases: 0, accepted: 0, rejected: 0, uncoded: 0, crashes: 0, known: 0, codes: {}, samples: [] };
}

export function rejected(t: Tally, code: string): void {
  t.rejected++;
  t.codes[code] = (t.codes[code] ?? 0) + 1;
}

export function uncoded(t: Tally, e: unknown, input: string): void {
  t.uncoded++;
  if (t.samples.length < 6) t.samples.push(`uncoded ${(e as Error)?.name}: ${(e as Error)?.message?.slice(0, 120)} <- ${JSON.stringify(input.slice(0, 160))}`);
}

export function crash(t: Tally, why: string, input: string): void {
  t.crashes++;
  if (t.samples.length < 6) t.samples.push(`crash: ${why.slice(0, 200)} <- ${JSON.stringify(input.slice(0, 160))}`);
}

/**
 * Classifies a thrown value: a rejection when it is one of `classes` and carries a string code;
 * uncoded when it is one of `uncodedClasses` (known error class without a code); else a crash.
 */
export function classify(t: Tally, e: unknown, input: string, classes: Function[], uncodedClasses: Function[] = []): void {
  const code = (e as { code?: unknown })?.code;
  if (classes.some((c) => e instanceof c) && typeof code === "string" && code.length > 0) rejected(t, code);
  else if (uncodedClasses.some((c) => e instanceof c)) uncoded(t, e, input);
  else crash(t, `${(e as Error)?.name}: ${(e as Error)?.message}`, input);
}

export function known(t: Tally, what: string, input: string): void {
  t.known++;
  t.codes[what] = (t.codes[what] ?? 0) + 1;
  if (t.samples.length < 6) t.samples.push(`known ${what} <- ${JSON.stringify(input.slice(0, 160))}`);
}

export function sum(tallies: Tally[]): { cases: number; crashes: number; uncoded: number; known: number } {
  return tallies.reduce(
    (a, t) => ({ cases: a.cases + t.cases, crashes: a.crashes + t.crashes, uncoded: a.uncoded + t.uncoded, known: a.known + t.known }),
    { cases: 0, crashes: 0, uncoded: 0, known: 0 },
  );
}
