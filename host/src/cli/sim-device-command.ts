// henrytick sim-device: serve a simulated tester on a pseudo-terminal until stopped.
// stdout carries exactly one line, the device path, so scripts can read it; everything meant
// for a person goes to stderr.

import { formatSi } from "../format/si.ts";
import { PtyDevice } from "../sim/pty-device.ts";
import { DEFAULT_SCENARIO, loadScenario } from "../sim/scenario.ts";
import { intOption, parse } from "./args.ts";
import { CliUsageError } from "./errors.ts";

export async function runSimDevice(args: string[]): Promise<number> {
  const { values, positionals } = parse(args, { seed: { type: "string" } });
  if (positionals.length > 1) throw new CliUsageError(`unexpected argument "${positionals[1]}"`);
  const scenario = loadScenario(positionals[0] ?? DEFAULT_SCENARIO);
  const seed = intOption(values.seed, "seed", 0, 2 ** 32 - 1) ?? scenario.seed;

  const device = await PtyDevice.start({ part: scenario.part, seed });
  // Handlers go in before the path is printed: a script may signal us as soon as it reads it.
  let stopSignal: NodeJS.Signals | null = null;
  let wake: () => void = () => {};
  const signalled = new Promise<void>((resolve) => (wake = resolve));
  const onSignal = (sig: NodeJS.Signals) => {
    stopSignal = sig;
    wake();
  };
  process.on("SIGINT", onSignal);
  process.on("SIGTERM", onSignal);
  process.on("SIGHUP", onSignal);
  try {
    process.stdout.write(device.path + "\n");
    const L = formatSi(scenario.part.inductance_h, "H", 3);
    process.stderr.write(
      `   simulated tester with ${scenario.name} (${L}, seed ${seed}) on ${device.path}\n` +
        `   measure it with: henrytick measure --port ${device.path}\n` +
        `   serving until Ctrl-C\n`,
    );
    const failure = await Promise.race([device.stopped, signalled.then(() => null)]);
    if (failure) throw failure;
    process.stderr.write(`   stopped (${stopSignal}); ${device.path} is gone\n`);
    return 0;
  } finally {
    process.off("SIGINT", onSignal);
    process.off("SIGTERM", onSignal);
    process.off("SIGHUP", onSignal);
    await device.close();
  }
}
