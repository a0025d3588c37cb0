// A port of the firmware whose "hardware" is a script: captures are given entry by entry with
// the tick at which the hardware writes each one, and serial input arrives when the script says.
// The C harness (firmware/ports/host/harness.c) implements exactly the same semantics, so the
// release wasm run here and the wasm2c build run there must print the same bytes.
//
// Script lines (whitespace-separated integers, `#` comments):
//   id <u32>                     device id (default 0)
//   bits <n>                     capture_bits() (default 0: extended ticks)
//   capture <n> <at> <word> ...  entries for the next pulse: written once <at> ticks have passed
//                                since the switch opened
//   heard <n> <at> <word> ...    entries for the next listen (a pulse with charge 0)
//   stuck <at> <count>           the next pulse's capture_count() reports <count> from <at> on
//   rx <hex>                     bytes from the host, then poll until idle
//   idle <ticks>                 time passes with the firmware idle, then poll until idle
//   overrun                      the port lost a received byte (fw_rx_overrun)

import { firmwareModule } from "../../host/src/sim/firmware-image.ts";
import type { FirmwareVariant } from "../../host/src/sim/firmware-image.ts";
import type { FirmwareExports } from "../../host/src/sim/sim-tester.ts";

/** Same guard as the C harness: a firmware that never goes idle is a fault, not a hang. */
export const MAX_POLLS = 1_000_000;

interface Record {
  at: number[];
  words: number[];
  stuckAt: number;
  stuckCount: number;
}

interface Active extends Record {
  openTick: number;
  buf: number;
  capacity: number;
  written: number;
  stopped: boolean;
}

const emptyRecord = (): Record => ({ at: [], words: [], stuckAt: -1, stuckCount: 0 });

export class ScriptedPort {
  readonly fw: FirmwareExports;
  /** Everything the firmware sent. */
  output: number[] = [];
  /** HAL activity, for interlock tests. */
  readonly log = { pulses: 0, listens: 0, stops: 0, selects: 0, switchClosed: false };
  /** Every switch closing: ticks since the port started (not wrapped) and the charge asked for. */
  readonly pulseLog: { at_ticks: number; charge_ticks: number }[] = [];
  private now = 0; // u32
  private sinceStart = 0; // the same time, not wrapped
  private deviceId = 0;
  private bits = 0;
  private captures: Record[] = [];
  private listens: Record[] = [];
  private nextStuck: [number, number] | null = null;
  private active: Active | null = null;

  constructor(variant: FirmwareVariant = "release", setup: { id?: number; bits?: number } = {}) {
    this.deviceId = setup.id ?? 0;
    this.bits = setup.bits ?? 0;
    const inst = new WebAssembly.Instance(firmwareModule(variant), { hal: this.hal() });
    this.fw = inst.exports as unknown as FirmwareExports;
    this.fw.fw_init();
  }

  /** Runs a whole script (the `id` and `bits` lines must come first: they set up the port). */
  static runScript(text: string, variant: FirmwareVariant = "release"): ScriptedPort {
    const lines = text.split("\n").map((l) => l.replace(/#.*/, "").trim()).filter((l) => l.length > 0);
    const setup: { id?: number; bits?: number } = {};
    while (lines.length > 0 && /^(id|bits) /.test(lines[0])) {
      const [k, v] = lines.shift()!.split(/\s+/);
      setup[k as "id" | "bits"] = Number(v);
    }
    const port = new ScriptedPort(variant, setup);
    for (const line of lines) {
      const t = line.split(/\s+/);
      const nums = t.slice(1).map(Number);
      if (t[0] === "capture" || t[0] === "heard") {
        const r = emptyRecord();
        for (let i = 0; i < nums[0]; i++) {
          r.at.push(nums[1 + 2 * i]);
          r.words.push(nums[2 + 2 * i]);
        }
        (t[0] === "capture" ? port.captures : port.listens).push(r);
      } else if (t[0] === "stuck") port.nextStuck = [nums[0], nums[1]];
      else if (t[0] === "rx") port.rx(Buffer.from(t[1], "hex"));
      else if (t[0] === "idle") port.idle(nums[0]);
      else if (t[0] === "overrun") port.fw.fw_rx_overrun();
      else throw new Error(`script: unknown line ${JSON.stringify(line)}`);
    }
    return port;
  }

  queueCapture(at: number[], words: number[]): void {
    this.captures.push({ ...emptyRecord(), at, words });
  }

  queueHeard(at: number[], words: number[]): void {
    this.listens.push({ ...emptyRecord(), at, words });
  }

  stuckNext(at: number, count: number): void {
    this.nextStuck = [at, count];
  }

  rx(bytes: Uint8Array): void {
    for (const b of bytes) {
      while (this.fw.fw_rx(b) === 0) this.run();
    }
    this.run();
  }

  idle(ticks: number): void {
    this.now = (this.now + ticks) >>> 0;
    this.sinceStart += ticks;
    this.run();
  }

  text(): string {
    return Buffer.from(this.output).toString("latin1");
  }

  private run(): void {
    for (let i = 0; i < MAX_POLLS; i++) {
      const wait = this.fw.fw_poll() | 0;
      if (wait <= 0 || this.fw.fw_busy() === 0) return;
      this.now = (this.now + wait) >>> 0;
      this.sinceStart += wait;
    }
    throw new Error("scripted firmware did not go idle");
  }

  private hal(): { [name: string]: (...a: number[]) => number | void } {
    return {
      now: () => this.now | 0,
      select: () => {
        this.log.selects++;
      },
      pulse: (charge: number, buf: number, capacity: number) => {
        const listen = charge === 0;
        const r = (listen ? this.listens : this.captures).shift() ?? emptyRecord();
        if (!listen && this.nextStuck) {
          [r.stuckAt, r.stuckCount] = this.nextStuck;
          this.nextStuck = null;
        }
        if (listen) this.log.listens++;
        else {
          this.log.pulses++;
          this.log.switchClosed = true;
          this.pulseLog.push({ at_ticks: this.sinceStart, charge_ticks: charge });
        }
        this.active = { ...r, openTick: (this.now + charge) >>> 0, buf, capacity, written: 0, stopped: false };
      },
      capture_count: () => this.count(),
      stop: () => {
        this.count();
        if (this.active) this.active.stopped = true;
        this.log.stops++;
        this.log.switchClosed = false;
      },
      uart_write: (ptr: number, len: number) => {
        for (const b of new Uint8Array(this.fw.memory.buffer, ptr, len)) this.output.push(b);
      },
      device_id: () => this.deviceId | 0,
      capture_bits: () => this.bits,
    };
  }

  private count(): number {
    const a = this.active;
    if (!a) return 0;
    if (a.stopped) return a.written;
    const elapsed = (this.now - a.openTick) | 0;
    const mem = new Int32Array(this.fw.memory.buffer, a.buf, a.capacity);
    while (a.written < a.words.length && a.written < a.capacity && a.at[a.written] <= elapsed) {
      mem[a.written] = a.words[a.written];
      a.written++;
    }
    if (a.stuckAt >= 0 && elapsed >= a.stuckAt) return a.stuckCount;
    return a.written;
  }
}
