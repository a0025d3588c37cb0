// henrytick command line. Commands only parse arguments and format output; the work is done by
// the library (open-tester, measure, capture, analysis).
//
// Each command's module is imported when that command runs, so `--help`, `--version` and
// commands that need no tester load neither the serial stack nor the simulator nor the report
// code (test/bench/sections/cli.ts counts the files `--help` loads).

import { CALIBRATE_USAGE, MEASURE_OPTIONS, WATCH_USAGE } from "./help-text.ts";
import { CliUsageError, cliWording, reportError } from "./errors.ts";
import { SAFETY_TEXT } from "./safety.ts";
import { packageVersion } from "../version.ts";

const COMMANDS = ["measure", "analyze", "profile", "advise", "sim-device", "sort", "wind", "report", "calibrate", "scenarios", "ports", "help"];

export const USAGE = `henrytick — scopeless inductance meter (measures 1 µH to 1 H)

Usage:
  henrytick measure --sim [SCENARIO]   measure a simulated part (default demo part if none)
  henrytick measure --port PATH        measure the part on a tester at a serial port
  henrytick analyze FILE...            analyse saved captures again
  henrytick profile (--sim | --port PATH)   show the tester's board profile
  henrytick advise (--sim [SCENARIO] | --port PATH)
                                       probe the part and rank every setting, with reasons
  henrytick scenarios                  list the simulated demo parts
  henrytick --version                  print the installed package's version
  henrytick ports                      list this computer's serial ports
  henrytick sort (--sim | --port PATH) --nominal 10u --tol 5%   sort parts against a tolerance
  henrytick wind (--sim | --port PATH) --target 22u      turns to add or remove to reach a target
  henrytick report CAPTURE... [--out FILE]  HTML report with plots for saved captures
${CALIBRATE_USAGE}
  henrytick sim-device [SCENARIO] [--seed N]   serve a simulated tester on a pseudo-terminal
                                       (prints its path for --port; needs socat; Ctrl-C stops)
  henrytick sim-device … --emulated m4|m0   the same, with the firmware's C build running on an
                                       emulated STM32F405 (needs qemu-system-arm, wabt, gcc-arm-none-eabi)

Options for measure:
${MEASURE_OPTIONS}

Continuous reading (measure --watch):
${WATCH_USAGE}

Options for analyze:  --json, --csv (measure takes --csv too: a header and one row)

Examples:
  henrytick measure --sim                              the default demo part, ranged automatically
  henrytick measure --sim filter-coil-4m7 --json       one reading as JSON
  henrytick measure --port /dev/ttyACM0 --csv >> log.csv   append a reading to a spreadsheet
  henrytick measure --sim --save c.json && henrytick analyze c.json --json
  henrytick advise --sim solenoid-valve-82m            every setting, ranked, with reasons

Bench workflows (sort, wind and report each have --help with every option and examples):
  henrytick sort --sim --nominal 10u --tol 5%         sort a simulated tray of twelve parts
  henrytick sort --port PATH --nominal 4u7J --trigger enter   one part per Enter key
  henrytick wind --sim --target 22u --turns 30,38     winding advice on a simulated former
  henrytick measure --sim --save c.json && henrytick report c.json   HTML report with plots
  Values as the trade writes them: 4.7u, 4.7 µH, 4.7e-6, 4u7, 330u, 1m5; inductor marks 4R7
  (4.7 µH) and 100 (10 µH); a bare 10 is refused (write 10u or 10m); tolerances 5%, J, K,
  +10%/-5%, 0.5u. --json / --csv print machine-readable results; NO_COLOR=1 turns colour off.

Exit status: 0 reading given or session finished, 1 no reading (the message says why and what
to do), 2 usage error, 70 internal error.

${SAFETY_TEXT}
`;


export async function main(argv: string[]): Promise<number> {
  const [command, ...rest] = argv;
  try {
    // Every command and sub-command has its own page; --version works after a command too.
    if (command && command !== "--help" && command !== "-h" && command !== "help" && rest.some((a) => a === "--help" || a === "-h")) {
      const page = await (await import("./help-pages.ts")).commandHelp(command, rest[0]?.startsWith("-") ? undefined : rest[0]);
      if (page) {
        process.stdout.write(page);
        return 0;
      }
    }
    if (rest.includes("--version") || command === "-V") {
      process.stdout.write(`henrytick ${packageVersion()}\n`);
      return 0;
    }
    switch (command) {
      case "measure":
        return await (await import("./measure-command.ts")).runMeasure(rest);
      case "analyze":
        return await (await import("./analyze-command.ts")).runAnalyze(rest);
      case "profile":
        return await (await import("./info-commands.ts")).runProfile(rest);
      case "advise":
        return await (await import("./advise-command.ts")).runAdvise(rest);
      case "sim-device": return await (await import("./sim-device-command.ts")).runSimDevice(rest);
      case "sort": return await (await import("./sort-command.ts")).runSortCommand(rest);
      case "wind": return await (await import("./wind-command.ts")).runWindCommand(rest);
      case "report": return await (await import("./report-command.ts")).runReportCommand(rest);
      case "calibrate": return await (await import("./calibrate-command.ts")).runCalibrate(rest);
      case "scenarios":
        return (await import("./info-commands.ts")).runScenarios(rest);
      case "ports":
        return await (await import("./ports-command.ts")).runPorts(rest);
      case "--version":
        process.stdout.write(`henrytick ${packageVersion()}\n`);
        return 0;
      case undefined:
      case "help":
      case "--help":
      case "-h": {
        // `henrytick help sort` is `henrytick sort --help`.
        const page = command === "help" && rest[0] ? await (await import("./help-pages.ts")).commandHelp(rest[0], rest[1]) : undefined;
        process.stdout.write(page ?? USAGE);
        return command === undefined ? 2 : 0;
      }
      default:
        throw new CliUsageError(`unknown command "${command}"${(await import("./suggest.ts")).suggest(command, COMMANDS)}`);
    }
  } catch (e) {
    const status = reportError(e);
    // In --json mode the error is also a JSON object on stdout, so a program reading stdout sees it.
    if (rest.includes("--json")) process.stdout.write(JSON.stringify({ error: errorJson(e, status) }, null, 2) + "\n");
    return status;
  }
}

/** { code, message, exit_status } for an error; a usage error's code is USAGE. */
export function errorJson(e: unknown, exit_status: number): { code: string; message: string; exit_status: number } {
  const code = (e as { code?: unknown } | undefined)?.code;
  const message = cliWording(e instanceof Error ? e.message : String(e));
  return { code: typeof code === "string" ? code : exit_status === 2 ? "USAGE" : "INTERNAL", message, exit_status };
}
