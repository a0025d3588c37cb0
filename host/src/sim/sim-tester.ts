// The simulated tester: the real firmware wasm running on a Node implementation of its HAL, with
// the circuit, comparator and timer simulated. Time is virtual: the firmware asks how long it may
// sleep (fw_poll's return value) and the simulator jumps the clock forward by that much, so a
// measurement completes as fast as the host can compute it and is fully deterministic.

import { simulatePulse } from "./front-end.ts";
import type { BoardModel } from "./board-model.ts";
import { referenceBoard } from "./board-model.ts";
import type { FirmwareVariant } from "./firmware-image.ts";
import { firmwareModule } from "./firmware-image.ts";
import { Random } from "./random.ts";
import type { PartModel } from "./scenario.ts";

export interface FirmwareExports {
  memory: WebAssembly.Memory;
  fw_init(): void;
  fw_rx(byte: number): number;
  fw_poll(): number;
  fw_busy(): number;
}

/** Edges of the pending capture, in ticks since the switch opened. */
interface PendingCapture {
  openTick: number;
  ticks: number[];
  levels: number[];
  written: number;
  buf: number;
  capacity: number;
  stopped: boolean;
}

export interface SimTesterOptions {
  part: PartModel | null; // null: open terminals
  seed: number;
  board?: BoardModel;
  /** Firmware image to run; default the release build. */
  firmware?: FirmwareVariant;
}

/** Longest run of polls without the firmware going idle; guards against a firmware bug. */
const MAX_POLLS_PER_RUN = 1_000_000;

export class SimTester {
  readonly board: BoardModel;
  part: PartModel | null;
  private rng: Random;
  /** The firmware instance's exports (tests reach diagnostic exports through it). */
  readonly fw: FirmwareExports;
  private nowTicks = 0; // virtual time, float64 ticks since reset
  private drive = 0;
  private tank = 0;
  private capture: PendingCapture | null = null;
  private output: (bytes: Uint8Array) => void = () => {};
  /** Counts of physical events, for tests and diagnostics. */
  readonly stats = { pulses: 0, switchClosedTicks: 0, peakRingV: 0 };

  constructor(opts: SimTesterOptions) {
    this.board = opts.board ?? referenceBoard();
    this.part = opts.part;
    this.rng = new Random(opts.seed);
    const instance = new WebAssembly.Instance(firmwareModule(opts.firmware), { hal: this.hal() });
    this.fw = instance.exports as unknown as FirmwareExports;
    this.fw.fw_init();
  }

  /** Receives everything the firmware sends to the host. */
  onOutput(handler: (bytes: Uint8Array) => void): void {
    this.output = handler;
  }

  /** Delivers bytes from the host, then runs the firmware until it waits for input again. */
  input(bytes: Uint8Array): void {
    for (const b of bytes) {
      // USB CDC flow control: a byte the firmware cannot queue yet waits for the next poll.
      while (this.fw.fw_rx(b) === 0) this.run();
    }
    this.run();
  }

  /** The edges the simulated capture hardware produced for the last pulse (ground truth for tests). */
  get lastEdges(): { ticks: readonly number[]; levels: readonly number[]; written: number } | null {
    const c = this.capture;
    return c ? { ticks: c.ticks, levels: c.levels, written: c.written } : null;
  }

  /** Virtual seconds since reset. */
  get time_s(): number {
    return this.nowTicks / this.board.timer.tick_hz;
  }

  /**
   * Lets idle time pass (the host thinking, the user swapping parts): the firmware's rest
   * timers run down. Measurements themselves are fast-forwarded by run().
   */
  advance(seconds: number): void {
    if (!(seconds > 0)) return;
    this.nowTicks += seconds * this.board.timer.tick_hz;
    this.run();
  }

  /** Polls the firmware, jumping the clock over its waits while a measurement is in progress. */
  private run(): void {
    for (let i = 0; i < MAX_POLLS_PER_RUN; i++) {
      const wait = this.fw.fw_poll();
      if (wait <= 0 || this.fw.fw_busy() === 0) return;
      this.nowTicks += wait;
    }
    throw new Error("simulated firmware did not go idle (firmware fault)");
  }

  private hal(): Record<string, (...args: number[]) => number | void> {
    return {
      now: () => Math.floor(this.nowTicks) | 0,
      select: (drive: number, tank: number) => {
        this.drive = drive;
        this.tank = tank;
      },
      pulse: (chargeTicks: number, buf: number, capacity: number) => this.pulse(chargeTicks, buf, capacity),
      capture_count: () => this.captureCount(),
      stop: () => {
        if (this.capture) {
          this.captureCount();
          this.capture.stopped = true;
        }
      },
      uart_write: (ptr: number, len: number) => {
        this.output(new Uint8Array(this.fw.memory.buffer, ptr, len).slice());
      },
      device_id: () => this.board.device_id | 0,
    };
  }

  private pulse(chargeTicks: number, buf: number, capacity: number): void {
    this.stats.pulses++;
    this.stats.switchClosedTicks += chargeTicks;
    const b = this.board;
    const openTick = this.nowTicks + chargeTicks;
    const pending: PendingCapture = { openTick, ticks: [], levels: [], written: 0, buf, capacity, stopped: false };
    this.capture = pending;
    const part = this.part;
    if (!part) return; // open terminals: no current, no ring
    const window_s = (2 ** 30 - 1) / b.timer.tick_hz;
    const r = simulatePulse(b, part, this.drive, this.tank, chargeTicks / b.timer.tick_hz, capacity, this.rng, window_s);
    this.stats.peakRingV = Math.max(this.stats.peakRingV, r.peak_v);
    const edges = r.edges;
    pending.ticks = edges.ticks;
    pending.levels = edges.levels;
  }

  /** DMA emulation: copies edges that have happened by now into firmware memory. */
  private captureCount(): number {
    const cap = this.capture;
    if (!cap) return 0;
    if (cap.stopped) return cap.written;
    const mem = new Int32Array(this.fw.memory.buffer, cap.buf, cap.capacity);
    const elapsed = this.nowTicks - cap.openTick;
    while (cap.written < cap.ticks.length && cap.written < cap.capacity && cap.ticks[cap.written] <= elapsed) {
      mem[cap.written] = (cap.ticks[cap.written] << 1) | cap.levels[cap.written];
      cap.written++;
    }
    return cap.written;
  }
}
