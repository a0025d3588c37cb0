// The edge server: the emulated board's front end. QEMU models no comparator and no input
// capture, so the emulated-board port (firmware/ports/qemu-f405) asks this server, over QEMU's
// second serial port (a unix socket), for the edges each pulse's ring produces. The server
// answers from the host simulator's front end (SimFrontEnd: the same board model, part and noise
// stream as `--sim`), so the same pulses give the same edges, bit for bit.
//
// Frames, both directions (little-endian), as the port's header comment describes:
//   0xE5 0x1D | type u8 | seq u8 | length u16 | payload | CRC-16/CCITT-FALSE u16 over type..payload
// HELLO (1) → 0x81 device id and tick factor; PULSE (2) → 0x82 the capture's entries;
// TIME (3) → 0x83 the host's clock in board ticks (the port's idle time follows it). Before
// computing a pulse's ring the server sends WORKING (type | 0x40, no payload).

import { createServer } from "node:net";
import type { Server, Socket } from "node:net";
import { crc16Range } from "@henrytick/shared-protocol";
import type { BoardModel } from "./board-model.ts";
import type { PartModel } from "./scenario.ts";
import { SimFrontEnd } from "./sim-tester.ts";

export const LINK_MAGIC = [0xe5, 0x1d] as const;
export const LINK_HELLO = 1;
export const LINK_PULSE = 2;
export const LINK_TIME = 3;
export const LINK_REPLY = 0x80;
/** Sent before a pulse's ring is computed: "alive, working on it" (the port then waits longer). */
export const LINK_WORKING = 0x40;
const HEADER_BYTES = 6;
const MAX_PAYLOAD = 0xffff;

export interface LinkFrame {
  type: number;
  seq: number;
  payload: Uint8Array;
}

/** One frame on the wire. */
export function encodeLinkFrame(f: LinkFrame): Uint8Array {
  if (f.payload.length > MAX_PAYLOAD) throw new RangeError(`front-end link payload of ${f.payload.length} bytes exceeds ${MAX_PAYLOAD}`);
  const out = new Uint8Array(HEADER_BYTES + f.payload.length + 2);
  out.set(LINK_MAGIC, 0);
  out[2] = f.type;
  out[3] = f.seq & 0xff;
  out[4] = f.payload.length & 0xff;
  out[5] = f.payload.length >> 8;
  out.set(f.payload, HEADER_BYTES);
  const crc = crc16Range(out, 2, HEADER_BYTES + f.payload.length);
  out[HEADER_BYTES + f.payload.length] = crc & 0xff;
  out[HEADER_BYTES + f.payload.length + 1] = crc >> 8;
  return out;
}

/**
 * Splits a byte stream into frames: bytes before a frame start are skipped, a frame whose CRC
 * fails is dropped (counted in `rejected`); the port then times out and reports the fault.
 */
export class LinkFrameReader {
  private buf = new Uint8Array(0);
  rejected = 0;

  push(chunk: Uint8Array): LinkFrame[] {
    const joined = new Uint8Array(this.buf.length + chunk.length);
    joined.set(this.buf);
    joined.set(chunk, this.buf.length);
    const frames: LinkFrame[] = [];
    let at = 0;
    for (;;) {
      while (at + 1 < joined.length && !(joined[at] === LINK_MAGIC[0] && joined[at + 1] === LINK_MAGIC[1])) at++;
      if (joined.length - at < HEADER_BYTES) break;
      const len = joined[at + 4] | (joined[at + 5] << 8);
      const end = at + HEADER_BYTES + len + 2;
      if (joined.length < end) break;
      const crc = joined[end - 2] | (joined[end - 1] << 8);
      if (crc16Range(joined, at + 2, end - 2) === crc) {
        frames.push({ type: joined[at + 2], seq: joined[at + 3], payload: joined.slice(at + HEADER_BYTES, end - 2) });
        at = end;
      } else {
        this.rejected++;
        at += 1; // resynchronise on the next frame start
      }
    }
    this.buf = joined.slice(at);
    return frames;
  }
}

/** A deliberately broken link, to check that the port faults safely. */
export type LinkFault = { kind: "stall" | "corrupt"; after_pulses: number };

export interface EdgeServerOptions {
  board: BoardModel;
  part: PartModel | null;
  seed: number;
  /** From the `after_pulses`-th pulse on (listens not counted): no reply, or one with a flipped bit. */
  fault?: LinkFault;
}

/** A request the server answered, for tests and diagnostics. */
export interface PulseRecord {
  drive: number;
  tank: number;
  charge_ticks: number;
  capacity: number;
  open_tick: number;
  edges: number;
}

export class EdgeServer {
  frontEnd: SimFrontEnd;
  /** Pulses (charge > 0) answered, in order. */
  readonly pulses: PulseRecord[] = [];
  readonly stats = { hellos: 0, listens: 0, time_syncs: 0, rejected_frames: 0, bytes_out: 0, core: -1 };
  private readonly started_ms = performance.now();
  private server: Server | null = null;
  private socket: Socket | null = null;
  private readonly fault?: LinkFault;
  /** The port's 32-bit open ticks, unwrapped onto one growing time line. */
  private lastOpenU32: number | null = null;
  private openUnwrapped = 0;
  private onError: (e: Error) => void = () => {};

  private readonly seed: number;

  constructor(opts: EdgeServerOptions) {
    this.frontEnd = new SimFrontEnd(opts.board, opts.part, opts.seed);
    this.seed = opts.seed;
    this.fault = opts.fault;
  }

  /**
   * Starts the front end afresh, as a new `--sim` session does: the noise stream from its seed
   * again, no ring left over, `part` on the clips. The emulated chip keeps running.
   */
  restart(part: PartModel | null): void {
    this.frontEnd = new SimFrontEnd(this.frontEnd.board, part, this.seed);
    this.pulses.length = 0;
  }

  /** Swaps the part on the emulated clips (null: open terminals), as a person would between readings. */
  set part(p: PartModel | null) {
    this.frontEnd.part = p;
  }
  get part(): PartModel | null {
    return this.frontEnd.part;
  }

  /** Listens on a unix socket at `path`; QEMU connects to it as the board's second serial port. */
  listen(path: string, onError: (e: Error) => void): Promise<void> {
    this.onError = onError;
    return new Promise((resolve, reject) => {
      const server = createServer((socket) => this.serve(socket));
      server.once("error", reject);
      server.listen(path, () => {
        server.off("error", reject);
        server.on("error", (e) => this.onError(e));
        resolve();
      });
      this.server = server;
    });
  }

  close(): Promise<void> {
    this.socket?.destroy();
    const s = this.server;
    this.server = null;
    return new Promise((resolve) => (s ? s.close(() => resolve()) : resolve()));
  }

  private serve(socket: Socket): void {
    this.socket?.destroy(); // one board at a time: a reconnect replaces the old connection
    this.socket = socket;
    const reader = new LinkFrameReader();
    socket.on("error", () => {}); // QEMU going away ends the connection; the device reports QEMU's exit
    socket.on("data", (chunk: Buffer) => {
      let frames: LinkFrame[];
      try {
        frames = reader.push(chunk);
        this.stats.rejected_frames = reader.rejected;
        for (const f of frames) {
          if (f.type === LINK_PULSE && !this.stalled(f)) socket.write(encodeLinkFrame({ type: LINK_PULSE | LINK_WORKING, seq: f.seq, payload: new Uint8Array(0) }));
          const reply = this.answer(f);
          if (reply) {
            this.stats.bytes_out += reply.length;
            socket.write(reply);
          }
        }
      } catch (e) {
        this.onError(e as Error);
      }
    });
  }

  /** The reply to one request, or null for none (an unknown type, or a stalled link). */
  answer(f: LinkFrame): Uint8Array | null {
    const view = new DataView(f.payload.buffer, f.payload.byteOffset, f.payload.byteLength);
    if (f.type === LINK_HELLO && f.payload.length >= 5) {
      this.stats.hellos++;
      this.stats.core = f.payload[4];
      const cpu_hz = view.getUint32(0, true);
      const out = new DataView(new ArrayBuffer(8));
      out.setUint32(0, this.frontEnd.board.device_id >>> 0, true);
      out.setUint32(4, tickFactor(this.frontEnd.board, cpu_hz), true);
      return encodeLinkFrame({ type: LINK_HELLO | LINK_REPLY, seq: f.seq, payload: new Uint8Array(out.buffer) });
    }
    if (f.type === LINK_TIME) {
      // The host's monotonic clock as the board's crystal counts it (its error included).
      this.stats.time_syncs++;
      const t = this.frontEnd.board.timer;
      const ticks = BigInt(Math.round(((performance.now() - this.started_ms) / 1000) * t.tick_hz * (1 + t.ppm * 1e-6)));
      const out = new DataView(new ArrayBuffer(8));
      out.setBigUint64(0, ticks, true);
      return encodeLinkFrame({ type: LINK_TIME | LINK_REPLY, seq: f.seq, payload: new Uint8Array(out.buffer) });
    }
    if (f.type === LINK_PULSE && f.payload.length >= 16) {
      const drive = f.payload[0];
      const tank = f.payload[1];
      const charge_ticks = view.getUint32(4, true);
      const capacity = Math.min(view.getUint32(8, true), (MAX_PAYLOAD - 4) >> 2);
      const open_tick = this.unwrap(view.getUint32(12, true));
      let edges;
      if (charge_ticks === 0) {
        this.stats.listens++;
        edges = this.frontEnd.listen(open_tick);
      } else {
        edges = this.frontEnd.pulse(drive, tank, charge_ticks, capacity, open_tick);
        this.pulses.push({ drive, tank, charge_ticks, capacity, open_tick, edges: Math.min(capacity, edges.ticks.length) });
      }
      const n = Math.min(capacity, edges.ticks.length);
      const out = new DataView(new ArrayBuffer(4 + 4 * n));
      out.setUint32(0, n, true);
      for (let i = 0; i < n; i++) out.setUint32(4 + 4 * i, ((edges.ticks[i] << 1) | edges.levels[i]) >>> 0, true);
      const frame = encodeLinkFrame({ type: LINK_PULSE | LINK_REPLY, seq: f.seq, payload: new Uint8Array(out.buffer) });
      if (this.fault && charge_ticks > 0 && this.pulses.length > this.fault.after_pulses) {
        if (this.fault.kind === "stall") return null;
        frame[HEADER_BYTES + Math.min(4, frame.length - HEADER_BYTES - 3)] ^= 0x10; // one flipped bit
      }
      return frame;
    }
    return null;
  }

  /** True when the injected fault silences the answer to this request (WORKING included). */
  private stalled(f: LinkFrame): boolean {
    const charge = f.payload.length >= 8 ? new DataView(f.payload.buffer, f.payload.byteOffset).getUint32(4, true) : 0;
    return this.fault?.kind === "stall" && charge > 0 && this.pulses.length >= this.fault.after_pulses;
  }

  /** The port's open tick on the server's time line (its 32-bit counter wraps every 67 s). */
  private unwrap(u32: number): number {
    if (this.lastOpenU32 !== null) this.openUnwrapped += (u32 - this.lastOpenU32) | 0;
    else this.openUnwrapped = u32;
    this.lastOpenU32 = u32;
    return this.openUnwrapped;
  }
}

/**
 * The port's now() factor: profile ticks per core cycle in 0.32 fixed point, with the board's
 * crystal error (its timer runs `ppm` fast), as the emulated board's SysTick scaling.
 */
export function tickFactor(board: BoardModel, cpu_hz: number): number {
  const f = Math.round((board.timer.tick_hz * (1 + board.timer.ppm * 1e-6) / cpu_hz) * 2 ** 32);
  if (!(f > 0 && f < 2 ** 32)) throw new RangeError(`a ${board.timer.tick_hz} Hz tick cannot be made from a ${cpu_hz} Hz core clock`);
  return f;
}
