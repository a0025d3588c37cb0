// The simulated tester: the real firmware wasm running on a Node implementation of its HAL, with
// the circuit, comparator and timer simulated. Time is virtual: the firmware asks how long it may
// sleep (fw_poll's return value) and the simulator jumps the clock forward by that much, so a
// measurement completes as fast as the host can compute it and is fully deterministic.

import { simulatePulse } from "./front-end.ts";
import type { BoardModel } from "./board-model.ts";
import { referenceBoard } from "./board-model.ts";
import { CodedError } from "../coded-error.ts";
import type { FirmwareVariant } from "./firmware-image.ts";
import { firmwareModule } from "./firmware-image.ts";
import { Random } from "./random.ts";
import { RAW_OPEN_FLAG, RAW_OVERFLOW_FLAG } from "@henrytick/shared-protocol";
import type { PartModel } from "./scenario.ts";

export interface FirmwareExports {
  memory: WebAssembly.Memory;
  fw_init(): void;
  fw_rx(byte: number): number;
  fw_rx_overrun(): void;
  fw_poll(): number;
  fw_busy(): number;
}

/** Edges of the pending capture, in ticks since the switch opened (or the listen began). */
interface PendingCapture {
  openTick: number;
  ticks: number[];
  levels: number[];
  written: number;
  buf: number;
  capacity: number;
  stopped: boolean;
  /** Raw-capture mode: next edge and next counter wrap still to be recorded. */
  nextEdge: number;
  nextWrap: number;
}

/**
 * A capture timer narrower than the firmware's ticks (docs/porting.md, "Raw capture mode"): the
 * HAL delivers raw N-bit values, an open entry and overflow markers, and the firmware extends them.
 */
export interface RawCaptureOptions {
  /** Timer width, 8..24. */
  bits: number;
  /** Counter value at virtual time 0; sets where the wraps fall relative to the edges. */
  phase_ticks: number;
  /** Overflow interrupt latency: captures inside it are recorded before their wrap's marker. */
  overflow_latency_ticks: number;
}

export interface SimTesterOptions {
  part: PartModel | null; // null: open terminals
  seed: number;
  board?: BoardModel;
  /**
   * Firmware image to run: a variant of the reference board's build (default the release image),
   * or a compiled image, e.g. another board's (firmware/tools/build-board.ts).
   */
  firmware?: FirmwareVariant | WebAssembly.Module;
  /** Deliver raw timer captures instead of extended ticks (default: extended). */
  raw_capture?: RawCaptureOptions;
}

/** Longest run of polls without the firmware going idle; guards against a firmware bug. */
const MAX_POLLS_PER_RUN = 1_000_000;

/** Edges of one capture, in ticks since the switch opened (or the listen began). */
export interface CaptureEdges {
  ticks: number[];
  levels: number[];
}

/**
 * The simulated front end without the firmware: the part on the clips, the ring each pulse
 * starts and the comparator edges it produces, with the noise stream the tester draws from. The
 * simulated tester runs the firmware on it; the emulated board's edge server (qemu-edge-server.ts)
 * answers an emulated chip's pulses from it. The same sequence of pulses and listens gives the
 * same edges in both.
 */
export class SimFrontEnd {
  readonly board: BoardModel;
  part: PartModel | null;
  /**
   * True: the part sits on the board's own terminals, without the clips and leads, so neither the
   * fixture's capacitance nor the leads' inductance is in the circuit (open nulling's first step).
   */
  onTerminals = false;
  private rng: Random;
  private readonly seed: number;
  private lastRing: { part: PartModel; drive: number; tank: number; charge_s: number; openTick: number; tail: CaptureEdges | null } | null = null;
  /** Counts of physical events, for tests and diagnostics. */
  readonly stats = { pulses: 0, switchClosedTicks: 0, peakRingV: 0 };

  constructor(board: BoardModel, part: PartModel | null, seed: number) {
    this.board = board;
    this.part = part;
    this.seed = seed;
    this.rng = new Random(seed);
  }

  /**
   * A pulse of `chargeTicks` through drive resistor `drive` into tank `tank`, the switch opening
   * at `openTick` (ticks on the tester's clock): the edges of the ring, at most `capacity`.
   */
  pulse(drive: number, tank: number, chargeTicks: number, capacity: number, openTick: number): CaptureEdges {
    this.stats.pulses++;
    this.stats.switchClosedTicks += chargeTicks;
    this.lastRing = null;
    const b = this.circuitBoard();
    const part = this.part;
    if (!part) return { ticks: [], levels: [] }; // open terminals: no current, no ring
    const window_s = (2 ** 30 - 1) / b.timer.tick_hz;
    const charge_s = chargeTicks / b.timer.tick_hz;
    const r = simulatePulse(b, part, drive, tank, charge_s, capacity, this.rng, window_s);
    this.stats.peakRingV = Math.max(this.stats.peakRingV, r.peak_v);
    this.lastRing = { part, drive, tank, charge_s, openTick, tail: null };
    return r.edges;
  }

  /** The board as the part sees it: without the fixture when the part is on the terminals. */
  private circuitBoard(): BoardModel {
    return this.onTerminals ? { ...this.board, fixture_f: 0, lead_h: 0 } : this.board;
  }

  /**
   * What a listen with the switch open, begun at `openTick`, hears: the rest of the last pulse's
   * ring. The tail is drawn once per ring from its own random stream, so listening never changes
   * what later pulses record.
   */
  listen(openTick: number): CaptureEdges {
    const heard: CaptureEdges = { ticks: [], levels: [] };
    const last = this.lastRing;
    if (!last) return heard;
    if (!last.tail) {
      const b = this.circuitBoard();
      const rng = new Random((this.seed ^ 0x7a11) + this.stats.pulses);
      const window_s = Math.min((2 ** 30 - 1) / b.timer.tick_hz, (openTick - last.openTick) / b.timer.tick_hz + 10);
      last.tail = simulatePulse(b, last.part, last.drive, last.tank, last.charge_s, 400_000, rng, window_s).edges;
    }
    const tail = last.tail;
    const shift = openTick - last.openTick;
    for (let k = 0; k < tail.ticks.length; k++) {
      const t = tail.ticks[k] - shift;
      if (t < 0) continue;
      heard.ticks.push(Math.floor(t));
      heard.levels.push(tail.levels[k]);
    }
    return heard;
  }
}

export class SimTester {
  readonly board: BoardModel;
  /** The part, ring and comparator this tester's firmware pulses. */
  readonly frontEnd: SimFrontEnd;
  /** The firmware instance's exports (tests reach diagnostic exports through it). */
  readonly fw: FirmwareExports;
  private nowTicks = 0; // virtual time, float64 ticks since reset
  private drive = 0;
  private tank = 0;
  private capture: PendingCapture | null = null;
  /** The capture the HAL is currently writing: the last pulse's, or a listen with the switch open. */
  private active: PendingCapture | null = null;
  private readonly raw: RawCaptureOptions | null;
  private output: (bytes: Uint8Array) => void = () => {};
  /** Counts of physical events, for tests and diagnostics. */
  readonly stats: SimFrontEnd["stats"];

  constructor(opts: SimTesterOptions) {
    this.board = opts.board ?? referenceBoard();
    this.frontEnd = new SimFrontEnd(this.board, opts.part, opts.seed);
    this.stats = this.frontEnd.stats;
    this.raw = opts.raw_capture ?? null;
    const instance = new WebAssembly.Instance(opts.firmware instanceof WebAssembly.Module ? opts.firmware : firmwareModule(opts.firmware), { hal: this.hal() });
    this.fw = instance.exports as unknown as FirmwareExports;
    this.fw.fw_init();
  }

  /** The part on the clips (null: open terminals); set it to swap parts between pulses. */
  get part(): PartModel | null {
    return this.frontEnd.part;
  }
  set part(p: PartModel | null) {
    this.frontEnd.part = p;
  }

  /** The part on the board's own terminals (true) or on the clips at the end of the leads (false, the default). */
  get onTerminals(): boolean {
    return this.frontEnd.onTerminals;
  }
  set onTerminals(v: boolean) {
    this.frontEnd.onTerminals = v;
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
    // The tester's timer runs at its crystal's real rate, error included.
    this.nowTicks += seconds * this.board.timer.tick_hz * (1 + this.board.timer.ppm * 1e-6);
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
        // The firmware checks the indices against its own board profile: one beyond this board
        // model's means the image and the board model are of different boards.
        if (!(drive < this.board.drive_ohm.length && tank < this.board.tank_f.length)) {
          throw new CodedError("SIM_FAULT", `the firmware selected drive ${drive}, tank ${tank}, but the simulated board has ${this.board.drive_ohm.length} drives and ${this.board.tank_f.length} tanks: run the firmware image built for this board (firmware/tools/build-board.ts)`);
        }
        this.drive = drive;
        this.tank = tank;
      },
      pulse: (chargeTicks: number, buf: number, capacity: number) => this.pulse(chargeTicks, buf, capacity),
      capture_count: () => this.captureCount(),
      stop: () => {
        if (this.active) {
          this.captureCount();
          this.active.stopped = true;
        }
      },
      uart_write: (ptr: number, len: number) => {
        this.output(new Uint8Array(this.fw.memory.buffer, ptr, len).slice());
      },
      device_id: () => this.board.device_id | 0,
      capture_bits: () => this.raw?.bits ?? 0,
    };
  }

  private pulse(chargeTicks: number, buf: number, capacity: number): void {
    const openTick = this.nowTicks + chargeTicks;
    const pending: PendingCapture = { openTick, ticks: [], levels: [], written: 0, buf, capacity, stopped: false, nextEdge: 0, nextWrap: 1 };
    this.active = pending;
    // A charge time of 0 leaves the switch open: only what is still ringing is heard.
    const edges = chargeTicks === 0 ? this.frontEnd.listen(openTick) : this.frontEnd.pulse(this.drive, this.tank, chargeTicks, capacity, openTick);
    pending.ticks = edges.ticks;
    pending.levels = edges.levels;
    if (chargeTicks !== 0) this.capture = pending;
  }

  /** DMA emulation: copies edges that have happened by now into firmware memory. */
  private captureCount(): number {
    const cap = this.active;
    if (!cap) return 0;
    if (cap.stopped) return cap.written;
    const mem = new Int32Array(this.fw.memory.buffer, cap.buf, cap.capacity);
    const elapsed = this.nowTicks - cap.openTick;
    if (this.raw) return this.recordRaw(cap, mem, elapsed, this.raw);
    while (cap.written < cap.ticks.length && cap.written < cap.capacity && cap.ticks[cap.written] <= elapsed) {
      mem[cap.written] = (cap.ticks[cap.written] << 1) | cap.levels[cap.written];
      cap.written++;
    }
    return cap.written;
  }

  /**
   * Raw-capture emulation of an N-bit timer: the open entry, then captures and overflow markers
   * in the order a port's interrupts would record them. A capture latched after a wrap but
   * before that wrap's overflow interrupt ran is recorded first, flagged pending.
   */
  private recordRaw(cap: PendingCapture, mem: Int32Array, elapsed: number, raw: RawCaptureOptions): number {
    if (elapsed < 0) return cap.written;
    const period = 2 ** raw.bits;
    const openRaw = (Math.floor(cap.openTick) + raw.phase_ticks) % period;
    if (cap.written === 0 && cap.capacity > 0) {
      mem[0] = RAW_OPEN_FLAG | openRaw;
      cap.written = 1;
    }
    const wrapAt = (j: number) => j * period - openRaw; // ticks since open of the j-th wrap
    while (cap.written < cap.capacity) {
      const markerAt = wrapAt(cap.nextWrap) + raw.overflow_latency_ticks;
      const k = cap.nextEdge;
      const t = k < cap.ticks.length ? cap.ticks[k] : Infinity;
      if (t < markerAt) {
        if (t > elapsed) break;
        // Pending: the latest wrap at or before t has not been recorded yet.
        const wrapPending = t >= wrapAt(cap.nextWrap);
        const value = (openRaw + t) % period;
        mem[cap.written] = (value << 2) | (wrapPending ? 2 : 0) | cap.levels[k];
        cap.nextEdge++;
      } else {
        if (markerAt > elapsed) break;
        mem[cap.written] = RAW_OVERFLOW_FLAG | 1;
        cap.nextWrap++;
      }
      cap.written++;
    }
    return cap.written;
  }
}
