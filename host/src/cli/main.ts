// henrytick command line. Commands only parse arguments and format output; the work is done by
// the library (open-tester, measure, capture, analysis).

import { runAnalyze } from "./analyze-command.ts";
import { runMeasure } from "./measure-command.ts";
import { runProfile, runScenarios } from "./info-commands.ts";
import { runSimDevice } from "./sim-device-command.ts";
import { runSortCommand } from "./sort-command.ts";
import { WATCH_USAGE } from "./measure-watch.ts";
import { runWindCommand } from "./wind-command.ts";
import { CliUsageError, reportError } from "./errors.ts";
import { SAFETY_TEXT } from "./safety.ts";

export const USAGE = `henrytick — scopeless inductance meter

Usage:
  henrytick measure --sim [SCENARIO]   measure a simulated part (default demo part if none)
  henrytick measure --port PATH        measure the part on a tester at a serial port
  henrytick analyze FILE...            analyse saved captures again
  henrytick profile (--sim | --port PATH)   show the tester's board profile
  henrytick scenarios                  list the simulated demo parts
  henrytick sort (--sim | --port PATH) --nominal 10u --tol 5%   sort parts against a tolerance
  henrytick wind (--sim | --port PATH) --target 22u      turns to add or remove to reach a target
  henrytick sim-device [SCENARIO] [--seed N]   serve a simulated tester on a pseudo-terminal
                                       (prints its path for --port; needs socat; Ctrl-C stops)

Options for measure:
  --json               print the result as JSON (SI units in the key names)
  --save FILE          also write the capture (edges + settings) to FILE
  --label TEXT         a name for the part, kept in the capture and result
  --drive N --tank N   use a fixed setting (indices from "henrytick profile") instead of ranging
  --charge-us N        charge time with a fixed setting (default: 1000 µs or the interlock limit)
  --max-peak-v V       lower the ring-peak limit used by ranging (default 30 V)
  --seed N             noise seed for the simulated tester

Continuous reading (measure --watch):
${WATCH_USAGE}

Options for analyze:  --json

Exit status: 0 reading given, 1 no reading (the message says why and what to do), 2 usage error.

${SAFETY_TEXT}
`;

export async function main(argv: string[]): Promise<number> {
  const [command, ...rest] = argv;
  try {
    switch (command) {
      case "measure":
        return await runMeasure(rest);
      case "analyze":
        return await runAnalyze(rest);
      case "profile":
        return await runProfile(rest);
      case "sim-device": return await runSimDevice(rest);
      case "sort": return await runSortCommand(rest);
      case "wind": return await runWindCommand(rest);
      case "scenarios":
        return runScenarios(rest);
      case undefined:
      case "help":
      case "--help":
      case "-h":
        process.stdout.write(USAGE);
        return command === undefined ? 2 : 0;
      default:
        throw new CliUsageError(`unknown command "${command}"`);
    }
  } catch (e) {
    return reportError(e);
  }
}
