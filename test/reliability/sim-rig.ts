// The simulated tester on a link that can be damaged: a deterministic in-process transport (idle
// time is virtual, a fixed amount before each command, so runs replay exactly), a reset that
// power-cycles the tester, and the FaultTransport on top, with the device client connected.

import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { DeviceClient } from "../../host/src/device/client.ts";
import type { ClientOptions, MeasureSettings } from "../../host/src/device/client.ts";
import type { RawCapture } from "../../host/src/device/stream-reader.ts";
import { referenceBoard } from "../../host/src/sim/board-model.ts";
import type { BoardModel } from "../../host/src/sim/board-model.ts";
import type { PartModel } from "../../host/src/sim/scenario.ts";
import { SimTester } from "../../host/src/sim/sim-tester.ts";
import { FaultTransport } from "../../host/src/transport/fault-transport.ts";
import type { FaultOptions } from "../../host/src/transport/fault-transport.ts";
import type { Transport } from "../../host/src/transport/transport.ts";
import { LineSplitter, TransportBase, TransportError as TError } from "../../host/src/transport/transport.ts";

/** A low-Q test coil: about 46 edges on SETTING, quick to simulate and to fit. */
export const QUICK_PART: PartModel = { inductance_h: 1e-3, series_ohm: 16, self_capacitance_f: 3e-12 };
/** The quick coil as a scenario file for sim-device, in a new temporary folder named from `prefix`. */
export function quickCoilScenarioFile(prefix: string): string {
  const path = join(mkdtempSync(join(tmpdir(), prefix)), "quick-coil.json");
  writeFileSync(path, JSON.stringify({ format: "henrytick-scenario", version: 1, name: "quick-coil", story: "the reliability rig's low-Q test coil", part: QUICK_PART, seed: 11 }));
  return path;
}
export const SETTING: MeasureSettings = { drive: 2, tank: 1, charge_us: 1000, edge_limit: 8192, timeout_ms: 1000, quiet_us: 2000 };
/**
 * Short reply timeout: a lost line costs this much wall time, so tests stay quick; long enough
 * that a busy machine does not time out a reply the simulator has already computed.
 */
export const FAST_CLIENT: ClientOptions = { reply_timeout_ms: 300, resend_attempts: 2 };

/**
 * In-process link to a simulated tester that can be power-cycled. Unlike SimTransport, idle time
 * does not follow the host's clock: `idle_s` of virtual time passes before each command (rests
 * run down), so the edges do not depend on how fast the machine is.
 */
export class ResettableSimLink extends TransportBase implements Transport {
  readonly description = "simulated tester (resettable)";
  sim: SimTester;
  generation = 0;
  private splitter = new LineSplitter((l) => this.lineHandler(l));
  private closed = false;

  constructor(private readonly make: (generation: number) => SimTester, private readonly idle_s = 1) {
    super();
    this.sim = this.attach(make(0));
  }

  /** Power-cycles the tester: fresh firmware (no stored capture, counters at zero), output cut. */
  reset(): void {
    this.generation++;
    this.splitter = new LineSplitter((l) => this.lineHandler(l));
    const part = this.sim.part; // the part stays on the clips
    this.sim = this.attach(this.make(this.generation));
    this.sim.part = part;
  }

  private attach(sim: SimTester): SimTester {
    const gen = this.generation;
    sim.onOutput((bytes) => {
      setImmediate(() => {
        if (!this.closed && gen === this.generation) this.splitter.push(bytes);
      });
    });
    return sim;
  }

  async write(data: Uint8Array): Promise<void> {
    if (this.closed) throw new TError("simulated tester link is closed", true);
    const copy = data.slice();
    const sim = this.sim;
    setImmediate(() => {
      if (this.closed || sim !== this.sim) return;
      sim.advance(this.idle_s);
      sim.input(copy);
    });
  }

  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    this.closeHandler(null);
  }
}

export interface Rig {
  link: ResettableSimLink;
  faults: FaultTransport;
  client: DeviceClient;
  /** Pulses fired by every generation of the tester. */
  pulses(): number;
  close(): Promise<void>;
}

export interface RigOptions {
  part?: PartModel | null;
  seed?: number;
  board?: BoardModel;
  faults?: Omit<FaultOptions, "seed" | "onReset">;
  client?: ClientOptions;
}

/** Opens the device client on a fault-injecting link to a simulated tester (no faults during connect unless given). */
export async function openRig(opts: RigOptions = {}): Promise<Rig> {
  const seed = opts.seed ?? 1;
  const board = opts.board ?? referenceBoard();
  const part = opts.part === undefined ? QUICK_PART : opts.part;
  let earlierPulses = 0;
  const link = new ResettableSimLink((gen) => new SimTester({ part, seed: seed + 1000 * gen, board }));
  const faults = new FaultTransport(link, {
    seed,
    ...opts.faults,
    onReset: () => {
      earlierPulses += link.sim.stats.pulses;
      link.reset();
    },
  });
  const client = await DeviceClient.connect(faults, opts.client ?? FAST_CLIENT);
  return { link, faults, client, pulses: () => earlierPulses + link.sim.stats.pulses, close: () => client.close() };
}

/** The edges the simulated capture hardware recorded for the last pulse: what a correct capture must hold. */
export function truthEdges(sim: SimTester): { ticks: number[]; levels: number[] } {
  const e = sim.lastEdges;
  if (!e) return { ticks: [], levels: [] };
  return { ticks: e.ticks.slice(0, e.written), levels: e.levels.slice(0, e.written) };
}

/**
 * Lets writes already handed to the link reach the tester: a reply can resolve a reading before
 * the tester has even seen that reading's MS (the reply was an earlier one), and the truth must
 * be read after it has.
 */
export async function settle(): Promise<void> {
  for (let i = 0; i < 3; i++) await new Promise((r) => setImmediate(r));
}

/** True when a verified capture holds exactly the edges the hardware recorded for its last pulse (call settle() first). */
export function matchesTruth(raw: RawCapture, sim: SimTester): boolean {
  const t = truthEdges(sim);
  if (t.ticks.length !== raw.ticks.length) return false;
  for (let i = 0; i < t.ticks.length; i++) if (t.ticks[i] !== raw.ticks[i] || t.levels[i] !== raw.levels[i]) return false;
  return true;
}

/** Runs `fn` and returns what it threw (undefined if it did not throw). */
export async function caught(fn: () => Promise<unknown>): Promise<unknown> {
  try {
    await fn();
    return undefined;
  } catch (e) {
    return e;
  }
}
