// A Transport wrapper that damages the link on purpose, for reliability tests: what a bad cable,
// a hub that drops out, a tester that resets or a stuck USB stack do to the lines between host
// and tester. Every fault is drawn from a seeded generator, so a failing run can be replayed.
//
// Received lines pass three stages: byte faults (a byte lost or a bit flipped, the newline
// included, so lines can merge or split as on a real wire), line faults (a line repeated, two
// lines swapped), then delivery (a slow device, a stall, a reset that cuts the output). Sent
// bytes can lose a byte or a bit too. Faults are either steady rates per line or armed one-shot.

import { Random } from "../sim/random.ts";
import type { Transport } from "./transport.ts";
import { LineSplitter, TransportBase, TransportError } from "./transport.ts";

export type RxFault = "drop_byte" | "flip_bit" | "duplicate_line" | "reorder_lines" | "stall" | "reset";
export type TxFault = "tx_drop_byte" | "tx_flip_bit";
export type FaultKind = RxFault | TxFault | "vanish" | "garbage_at_connect" | "stray_to_tester";

export interface FaultOptions {
  seed: number;
  /** Probability per received line (rx faults) or per write (tx faults). Default 0 for all. */
  rates?: Partial<Record<RxFault | TxFault, number>>;
  /** Bytes already in the pipe when the host first writes (boot noise, a previous session's tail). */
  garbage_at_connect?: string;
  /**
   * Bytes another program wrote into the port before the host opened it (a modem manager's AT
   * probe, a terminal): they reach the tester ahead of the host's first write.
   */
  stray_to_tester?: string;
  /** Delay of every received line, ms: a slow device or a congested hub. Default 0. */
  line_delay_ms?: number;
  /** How long a stall holds the lines back, ms; Infinity: the rest of the burst is lost (the tester answers the next command). */
  stall_ms?: number;
  /** Steady rx faults hit only lines with these tags (e.g. ["CD"]); armed faults hit any line. */
  only_tags?: string[];
  /** What a reset does to the tester itself (the wrapper only cuts its output). */
  onReset?: () => void;
}

const FAULT_KINDS: FaultKind[] = ["drop_byte", "flip_bit", "duplicate_line", "reorder_lines", "stall", "reset", "tx_drop_byte", "tx_flip_bit", "vanish", "garbage_at_connect", "stray_to_tester"];
const RX_BYTE_FAULTS: RxFault[] = ["drop_byte", "flip_bit"];

export class FaultTransport extends TransportBase implements Transport {
  readonly description: string;
  /** Faults actually applied, by kind. */
  readonly injected = Object.fromEntries(FAULT_KINDS.map((k) => [k, 0])) as Record<FaultKind, number>;
  /** Commands the host sent, by tag (as read before any tx fault): tests count resends and pulses with it. */
  readonly sent: Record<string, number> = {};
  linesReceived = 0;
  private readonly rng: Random;
  private readonly rates: Partial<Record<RxFault | TxFault, number>>;
  /** One-shot faults, due at a received-line or write count. */
  private readonly armed: { kind: RxFault | TxFault; due: number; at_byte?: number; bit?: number }[] = [];
  /** Byte position (-1: the newline) and bit an armed byte fault asked for, else drawn at random. */
  private armedByte: number | undefined;
  private armedBit: number | undefined;
  private writes = 0;
  /** Re-splits damaged bytes into lines: a lost newline merges two lines, a made one splits. */
  private readonly rxLines = new LineSplitter((line) => this.lineStage(line));
  private held: string | null = null;
  private queue: { at_ms: number; line: string }[] = [];
  private timer: NodeJS.Timeout | null = null;
  private stallUntil_ms = 0;
  /** Output is cut (a reset, or a stall that never ends) until the host writes again. */
  private cut = false;
  private garbagePending: string | null;
  private strayPending: string | null;
  private closed = false;
  private rateApplies = true;

  constructor(private readonly inner: Transport, private readonly opts: FaultOptions) {
    super();
    this.description = `${inner.description} (fault injection, seed ${opts.seed})`;
    this.rng = new Random(opts.seed);
    this.rates = opts.rates ?? {};
    this.garbagePending = opts.garbage_at_connect ?? null;
    this.strayPending = opts.stray_to_tester ?? null;
    inner.onLine((line) => this.receive(line));
    inner.onClose((err) => this.shutDown(err));
  }

  /**
   * Applies `kind` once, to the received line (or write) `afterLines` from now; a byte fault hits
   * byte `at_byte` of the line (-1: its newline; negative counts from the end), a bit flip bit
   * `bit`, else random ones.
   */
  arm(kind: RxFault | TxFault, afterLines = 0, at_byte?: number, bit?: number): void {
    const tx = kind === "tx_drop_byte" || kind === "tx_flip_bit";
    this.armed.push({ kind, due: (tx ? this.writes : this.linesReceived) + afterLines + 1, at_byte, bit });
  }

  /** The cable is pulled: the host sees the link close, writes fail from now on. */
  unplug(): void {
    if (this.closed) return;
    this.injected.vanish++;
    this.shutDown(new TransportError(`${this.description}: device unplugged`, true));
  }

  async write(data: Uint8Array): Promise<void> {
    if (this.closed) throw new TransportError(`${this.description}: link is closed`, true);
    if (this.garbagePending !== null) {
      const g = this.garbagePending;
      this.garbagePending = null;
      this.injected.garbage_at_connect++;
      this.rxLines.pushText(g);
    }
    if (this.strayPending !== null) {
      const stray = this.strayPending;
      this.strayPending = null;
      await this.sendStray(stray);
    }
    this.writes++;
    const text = new TextDecoder("latin1").decode(data);
    const tag = /^([A-Z]{2})[ *]/.exec(text)?.[1];
    if (tag) this.sent[tag] = (this.sent[tag] ?? 0) + 1;
    // A command after a reset or a lost burst reaches a tester that talks again.
    this.cut = false;
    let bytes = data.slice();
    if (this.take("tx_drop_byte", true) && bytes.length > 0) {
      const at = this.bytePosition(bytes.length);
      bytes = new Uint8Array([...bytes.subarray(0, at), ...bytes.subarray(at + 1)]);
    }
    if (this.take("tx_flip_bit", true) && bytes.length > 0) bytes[this.bytePosition(bytes.length)] ^= 1 << this.bit();
    await this.inner.write(bytes);
  }

  /** Bytes from another program reach the tester now, between the host's commands. */
  async sendStray(bytes: string): Promise<void> {
    this.injected.stray_to_tester++;
    await this.inner.write(Uint8Array.from(bytes, (c) => c.charCodeAt(0) & 0xff));
  }

  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    this.clearQueue();
    await this.inner.close();
  }

  // ---- received path ----

  private receive(line: string): void {
    if (this.closed || this.cut) return;
    this.linesReceived++;
    const tags = this.opts.only_tags;
    this.rateApplies = !tags || tags.includes(line.slice(0, 2));
    if (this.take("reset")) {
      this.cut = true;
      this.queue = []; // what the tester had not yet sent dies with it
      this.opts.onReset?.();
      return;
    }
    if (this.take("stall")) {
      const ms = this.opts.stall_ms ?? Infinity;
      if (ms === Infinity) {
        this.cut = true;
        return;
      }
      this.stallUntil_ms = performance.now() + ms;
    }
    let bytes = line + "\n";
    for (const kind of RX_BYTE_FAULTS) {
      if (!this.take(kind)) continue;
      const at = this.bytePosition(bytes.length);
      bytes = kind === "drop_byte"
        ? bytes.slice(0, at) + bytes.slice(at + 1)
        : bytes.slice(0, at) + String.fromCharCode(bytes.charCodeAt(at) ^ (1 << this.bit())) + bytes.slice(at + 1);
    }
    this.rxLines.pushText(bytes);
  }


  private lineStage(line: string): void {
    if (this.held !== null) {
      // The held line goes out after the one that overtook it.
      const h = this.held;
      this.held = null;
      this.injected.reorder_lines++;
      this.deliver(line);
      this.deliver(h);
      return;
    }
    if (this.take("reorder_lines")) {
      this.held = line;
      // Nothing followed in this burst: it goes out late but in order (not counted as a swap).
      setImmediate(() => {
        if (this.held === line) {
          this.held = null;
          this.deliver(line);
        }
      });
      return;
    }
    this.deliver(line);
    if (this.take("duplicate_line")) this.deliver(line);
  }

  private deliver(line: string): void {
    const now = performance.now();
    const delay = this.opts.line_delay_ms ?? 0;
    if (delay <= 0 && now >= this.stallUntil_ms && this.queue.length === 0) {
      this.lineHandler(line);
      return;
    }
    const last = this.queue.length > 0 ? this.queue[this.queue.length - 1].at_ms : now;
    this.queue.push({ at_ms: Math.max(now, last, this.stallUntil_ms) + delay, line });
    this.schedule();
  }

  private schedule(): void {
    if (this.timer || this.queue.length === 0) return;
    this.timer = setTimeout(() => {
      this.timer = null;
      const now = performance.now();
      while (this.queue.length > 0 && this.queue[0].at_ms <= now + 0.5 && !this.closed) this.lineHandler(this.queue.shift()!.line);
      this.schedule();
    }, Math.max(0, this.queue[0].at_ms - performance.now()));
  }

  // ---- helpers ----

  /** True when fault `kind` applies now: an armed one-shot that is due, or the steady rate. */
  private take(kind: RxFault | TxFault, onWrite = false): boolean {
    const isTx = kind === "tx_drop_byte" || kind === "tx_flip_bit";
    if (isTx !== onWrite) return false;
    let hit = false;
    this.armedByte = undefined;
    this.armedBit = undefined;
    const count = onWrite ? this.writes : this.linesReceived;
    const i = this.armed.findIndex((a) => a.kind === kind && a.due <= count);
    if (i >= 0) {
      this.armedByte = this.armed[i].at_byte;
      this.armedBit = this.armed[i].bit;
      this.armed.splice(i, 1);
      hit = true;
    }
    const rate = onWrite || this.rateApplies ? this.rates[kind] ?? 0 : 0;
    if (!hit && rate > 0 && this.rng.uniform() < rate) hit = true;
    // Reorder and duplicate are counted when they actually change the order or count of lines.
    if (hit && kind !== "reorder_lines") this.injected[kind]++;
    return hit;
  }

  private bytePosition(n: number): number {
    const a = this.armedByte;
    this.armedByte = undefined;
    if (a === undefined) return this.pick(n);
    return a < 0 ? n + a : Math.min(a, n - 1);
  }

  private bit(): number {
    const b = this.armedBit;
    this.armedBit = undefined;
    return b ?? this.pick(8);
  }

  private pick(n: number): number {
    return Math.floor(this.rng.uniform() * n);
  }

  private clearQueue(): void {
    this.queue = [];
    if (this.timer) clearTimeout(this.timer);
    this.timer = null;
  }

  private shutDown(err: TransportError | null): void {
    if (this.closed && err) return;
    this.closed = true;
    this.clearQueue();
    this.closeHandler(err);
  }
}
