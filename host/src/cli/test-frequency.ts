// --freq: the working frequency asked for (measure, sort, wind, advise), read by the one value
// parser in hertz and checked against the frequencies a tester rings at.

import { TEST_FREQUENCY_RANGE } from "../ranging/choose-setting.ts";
import { CliUsageError } from "./errors.ts";
import { valueOption } from "./args.ts";

/** Spread into a command's parse table. */
export const FREQ_OPTIONS = { freq: { type: "string" } } as const;

/** The asked frequency in hertz, or undefined; with a fixed --drive/--tank it is refused (the tank sets the frequency). */
export function testFrequencyOption(values: { freq?: string; drive?: string; tank?: string }): number | undefined {
  if (values.freq === undefined) return undefined;
  if (values.drive !== undefined || values.tank !== undefined) {
    throw new CliUsageError("--freq lets ranging choose the tank nearest that frequency; leave out --drive and --tank, or --freq");
  }
  return valueOption(values.freq, "freq", "Hz", TEST_FREQUENCY_RANGE)!.value;
}
