// Argument parsing helpers on top of node:util parseArgs, turning its errors into usage errors.

import { parseArgs } from "node:util";
import type { ParseArgsConfig } from "node:util";

type OptionsConfig = NonNullable<ParseArgsConfig["options"]>;
import { CliUsageError } from "./errors.ts";
import { suggest } from "./suggest.ts";
import { parseValue, parseValueIn, ValueError, type ParsedValue } from "../values/parse-value.ts";
import { nominalTolerance, parseTolerance, TOLERANCE_LETTERS, type Tolerance } from "../values/tolerance.ts";

type Parsed<T extends OptionsConfig> = ReturnType<typeof parseArgs<{ args: string[]; options: T; allowPositionals: true; strict: true }>>;

export function parse<const T extends OptionsConfig>(args: string[], options: T): Parsed<T> {
  try {
    return parseArgs({ args, options, allowPositionals: true as const, strict: true as const });
  } catch (e) {
    const code = (e as { code?: string }).code;
    const unknown = /Unknown option '(-{1,2}[^']+)'/.exec((e as Error).message);
    if (code === "ERR_PARSE_ARGS_UNKNOWN_OPTION" && unknown) {
      const typed = unknown[1].replace(/^-+/, "");
      throw new CliUsageError(`unknown option ${unknown[1]}${suggest(typed, Object.keys(options), "--")} (the command's --help lists its options)`);
    }
    if (code === "ERR_PARSE_ARGS_INVALID_OPTION_VALUE") {
      const name = /'(-{1,2}[^' ]+)/.exec((e as Error).message)?.[1];
      throw new CliUsageError(name ? `${name} needs a value (a value starting with "-" is written ${name}=-3)` : (e as Error).message);
    }
    throw new CliUsageError((e as Error).message);
  }
}

/**
 * Options that only work with another: each given without its partner is refused, naming both
 * (`--count` without `--watch`).
 */
export function requireWith(values: Record<string, unknown>, needs: Record<string, string>): void {
  for (const [opt, partner] of Object.entries(needs)) {
    if (values[opt] !== undefined && values[opt] !== false && !values[partner]) throw new CliUsageError(`--${opt} works only with --${partner}; add --${partner} or leave out --${opt}`);
  }
}

/** Options that cannot go together (`--json --csv`): refused, naming them. */
export function refuseTogether(values: Record<string, unknown>, ...groups: string[][]): void {
  for (const g of groups) {
    const given = g.filter((o) => values[o] !== undefined && values[o] !== false);
    if (given.length > 1) throw new CliUsageError(`use either ${given.map((o) => `--${o}`).join(" or ")}, not both`);
  }
}

export function intOption(v: string | boolean | undefined, name: string, min: number, max: number): number | undefined {
  if (v === undefined) return undefined;
  const n = Number(v);
  if (typeof v !== "string" || !Number.isInteger(n) || n < min || n > max) {
    throw new CliUsageError(`--${name} must be an integer from ${min} to ${max}, got ${JSON.stringify(v)}`);
  }
  return n;
}

export function numberOption(v: string | boolean | undefined, name: string, min: number, max: number): number | undefined {
  if (v === undefined) return undefined;
  const n = Number(v);
  if (typeof v !== "string" || v.trim() === "" || !Number.isFinite(n) || n < min || n > max) {
    throw new CliUsageError(`--${name} must be a number from ${min} to ${max}, got ${JSON.stringify(v)}`);
  }
  return n;
}

/** Resolves the tester to open from --sim [SCENARIO] / --port PATH. */
export function testerTarget(values: { sim?: boolean; port?: string; seed?: string }, positionals: string[]) {
  if (values.sim && values.port) throw new CliUsageError("use either --sim or --port, not both");
  if (!values.sim && !values.port) throw new CliUsageError("say which tester: --sim [SCENARIO] or --port PATH");
  const seed = intOption(values.seed, "seed", 0, 2 ** 32 - 1);
  if (values.port) {
    if (positionals.length > 0) throw new CliUsageError(`unexpected argument "${positionals[0]}"`);
    return { port: values.port };
  }
  if (positionals.length > 1) throw new CliUsageError(`unexpected argument "${positionals[1]}"`);
  return { scenario: positionals[0], seed };
}

/**
 * Reads an option's value with a library function whose RangeError means the value itself is
 * wrong (an unknown series name, a tolerance reaching below zero, a value the value parser
 * refuses): that is a usage error naming the option, never an internal one.
 */
export function optionValue<T>(name: string, read: () => T): T {
  try {
    return read();
  } catch (e) {
    if (e instanceof ValueError || (e instanceof RangeError && (e as { code?: unknown }).code === undefined)) throw new CliUsageError(`--${name}: ${e.message}`);
    throw e;
  }
}

/**
 * A value option in `unit` through the one value parser (values/parse-value.ts), with the option
 * named in the message; `range` refuses what is outside it up front.
 */
export function valueOption(v: string | undefined, name: string, unit: string, range?: { min: number; max: number; what: string }): ParsedValue | undefined {
  if (v === undefined) return undefined;
  return optionValue(name, () => (range ? parseValueIn(v, unit, range) : parseValue(v, unit)));
}

/** The same, for an option that must be given. */
export function requiredValue(v: string | undefined, name: string, unit: string, example: string, range?: { min: number; max: number; what: string }): ParsedValue {
  if (v === undefined) throw new CliUsageError(`--${name} is required (a value in ${unit}, e.g. --${name} ${example})`);
  return valueOption(v, name, unit, range)!;
}

/** A tolerance option (5%, J, +10%/-5%, 0.5u) with the option named in the message. */
export function toleranceOption(v: string, name: string, unit = "H"): Tolerance {
  return optionValue(name, () => parseTolerance(v, unit));
}

/**
 * The tolerance of a value option that may end in a tolerance letter (--nominal 10uH F) and a
 * --tol beside it: either alone, or both when they agree; two that differ are refused with both
 * ways to write it. Undefined when neither is given.
 */
export function toleranceOnce(name: string, text: string, value: ParsedValue, tolText: string | undefined): Tolerance | undefined {
  const given = tolText === undefined ? undefined : toleranceOption(tolText, "tol");
  try {
    return nominalTolerance(value, given);
  } catch (e) {
    if (!(e instanceof ValueError && e.code === "TOLERANCE_CONFLICT")) throw e;
    const bare = text.trim().slice(0, -1).trim();
    throw new CliUsageError(
      `--${name} "${text}" ends in the tolerance letter ${value.toleranceLetter} (±${Number((TOLERANCE_LETTERS[value.toleranceLetter!] * 100).toPrecision(6))} %) but --tol says ${given!.text}: give the tolerance once, either --${name} "${bare}" --tol ${tolText} or --${name} "${text}" without --tol`,
    );
  }
}
