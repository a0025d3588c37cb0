// henrytick sim-device: serve a simulated tester on a pseudo-terminal until stopped. With
// --emulated m4|m0 the firmware runs as C on an emulated STM32F405 (QEMU) instead, its front end
// answered by the host simulator with the same board, part and seed as --sim.
// stdout carries exactly one line, the device path, so scripts can read it; everything meant
// for a person goes to stderr.

import { formatSi } from "../format/si.ts";
import { boardWithFixture, referenceBoard } from "../sim/board-model.ts";
import { PtyDevice } from "../sim/pty-device.ts";
import { EMULATED_CORES, QemuDevice, type EmulatedCore } from "../sim/qemu-device.ts";
import { DEFAULT_SCENARIO, loadScenario } from "../sim/scenario.ts";
import { intOption, parse } from "./args.ts";
import { CliUsageError } from "./errors.ts";

export async function runSimDevice(args: string[]): Promise<number> {
  const { values, positionals } = parse(args, { seed: { type: "string" }, emulated: { type: "string" } });
  if (positionals.length > 1) throw new CliUsageError(`unexpected argument "${positionals[1]}"`);
  const core = values.emulated;
  if (core !== undefined && !EMULATED_CORES.includes(core as EmulatedCore)) {
    throw new CliUsageError(`--emulated must be one of ${EMULATED_CORES.join(", ")} (the emulated chip's core), got "${core}"`);
  }
  const scenario = loadScenario(positionals[0] ?? DEFAULT_SCENARIO);
  const seed = intOption(values.seed, "seed", 0, 2 ** 32 - 1) ?? scenario.seed;

  // The scenario's bench conditions (fixture capacitance, leads, chatter) as measure --sim has them.
  const board = boardWithFixture(referenceBoard(), scenario.fixture);
  const device = core
    ? await QemuDevice.start({ core: core as EmulatedCore, board, part: scenario.part, seed })
    : await PtyDevice.start({ part: scenario.part, seed, board });
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
      (core
        ? `   emulated STM32F405 (Cortex-${core.toUpperCase()}, QEMU) running the firmware, front end simulated with ${scenario.name} (${L}, seed ${seed}), on ${device.path}\n`
        : `   simulated tester with ${scenario.name} (${L}, seed ${seed}) on ${device.path}\n`) +
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
