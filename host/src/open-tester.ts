// Opening a tester: a serial port (hardware, or a pseudo-terminal in front of a simulated
// tester) or the in-process simulated tester running the real firmware. The serial stack and the
// simulator are imported only when a target needs them, so a program that opens a serial tester
// loads no simulator and one that opens a simulated tester loads no serial stack.

import { DeviceClient } from "./device/client.ts";
import type { ClientOptions } from "./device/client.ts";
import type { PartModel, Scenario } from "./sim/scenario.ts";
import { DEFAULT_SCENARIO, loadScenario } from "./sim/scenario.ts";
import type { SimTester } from "./sim/sim-tester.ts";

export type TesterTarget =
  | { port: string; baudRate?: number }
  | { scenario?: string | Scenario; seed?: number }
  | { part: PartModel | null; seed?: number };

export interface OpenedTester {
  client: DeviceClient;
  /** Present for the in-process simulated tester. */
  sim?: SimTester;
  scenario?: Scenario;
  close(): Promise<void>;
}

export async function openTester(target: TesterTarget, opts: ClientOptions = {}): Promise<OpenedTester> {
  if ("port" in target) {
    const { SerialTransport } = await import("./transport/serial-transport.ts");
    const transport = await SerialTransport.open({ path: target.port, baudRate: target.baudRate });
    try {
      const client = await DeviceClient.connect(transport, opts);
      return { client, close: () => client.close() };
    } catch (e) {
      await transport.close();
      throw e;
    }
  }
  let scenario: Scenario | undefined;
  let part: PartModel | null;
  let seed: number;
  if ("part" in target) {
    part = target.part;
    seed = target.seed ?? 1;
  } else {
    const s = target.scenario ?? DEFAULT_SCENARIO;
    scenario = typeof s === "string" ? loadScenario(s) : s;
    part = scenario.part;
    seed = target.seed ?? scenario.seed;
  }
  const [{ SimTester }, { boardWithFixture, referenceBoard }, { SimTransport }] = await Promise.all([
    import("./sim/sim-tester.ts"), import("./sim/board-model.ts"), import("./transport/sim-transport.ts"),
  ]);
  const sim = new SimTester({ part, seed, board: boardWithFixture(referenceBoard(), scenario?.fixture) });
  const client = await DeviceClient.connect(new SimTransport(sim), opts);
  return { client, sim, scenario, close: () => client.close() };
}
