// The simulated tester paced as a board would be: every line it sends reaches the host when a
// board's would, on a clock that stops while the simulator computes. A capture's lines arrive
// after the charge, the ring (switch opening to the last edge) and the quiet time the tester waits
// out, then at the full-speed USB rate (e2e-meter.ts); every other reply at once. The
// simulator's own CPU (its ring, its comparator, the firmware in wasm) is taken out of that
// clock: a board spends none of the host's. So the host's loop meets the pacing a board sets,
// and a host that works while the tester pulses gains what it would gain on a board.
//
// Not modelled: USB frame scheduling (a full-speed host polls once per 1 ms frame; a CDC reply
// may wait for the next one), the tester's settle time before the pulse (the physics-only limit
// leaves it out too), and serial-stack latency. The figures from this transport are therefore
// upper bounds of what a board gives.

import { DeviceClient } from "../../../host/src/device/client.ts";
import { LineSplitter, TransportBase, TransportError, type Transport } from "../../../host/src/transport/transport.ts";
import type { SimTester } from "../../../host/src/sim/sim-tester.ts";
import { USB_FS_BULK_BYTES_PER_S } from "./e2e-meter.ts";

interface Due {
  at_ms: number;
  bytes: Uint8Array;
}

const decoder = new TextDecoder("latin1");

export class BoardPacedTransport extends TransportBase implements Transport {
  readonly description = "simulated tester paced as a board";
  private readonly splitter = new LineSplitter((line) => this.lineHandler(line));
  private closed = false;
  /** Wall time the simulator has computed, ms: the board clock does not run meanwhile. */
  simMs = 0;
  private lastInputAt = 0;
  private queue: Due[] = [];
  private polling = false;
  private collecting: Uint8Array[] | null = null;

  constructor(readonly tester: SimTester) {
    super();
    tester.onOutput((b) => this.collecting?.push(b.slice()));
    this.lastInputAt = this.now();
  }

  /** Board time, ms. */
  now(): number {
    return performance.now() - this.simMs;
  }

  async write(data: Uint8Array): Promise<void> {
    if (this.closed) throw new TransportError("simulated tester link is closed", true);
    const copy = data.slice();
    const sentAt = this.now();
    setImmediate(() => {
      if (this.closed) return;
      const out: Uint8Array[] = [];
      this.collecting = out;
      const w0 = performance.now();
      try {
        this.tester.advance((sentAt - this.lastInputAt) / 1000);
        this.lastInputAt = sentAt;
        this.tester.input(copy);
      } finally {
        this.collecting = null;
        this.simMs += performance.now() - w0;
      }
      this.schedule(decoder.decode(copy), sentAt, out);
    });
  }

  /** When each chunk the tester sent for this command reaches the host. */
  private schedule(command: string, sentAt: number, out: Uint8Array[]): void {
    let at = sentAt;
    let captureStarted = false;
    for (const bytes of out) {
      if (!captureStarted && command.startsWith("MS ") && decoder.decode(bytes).startsWith("CH ")) {
        // The stream starts once the capture is over: charge, ring, quiet.
        const args = command.split(" ");
        const charge_us = parseInt(args[3], 10);
        const quiet_us = parseInt(args[6], 10);
        const e = this.tester.lastEdges;
        const ring_s = e && e.written > 0 ? e.ticks[e.written - 1] / this.tester.board.timer.tick_hz : 0;
        at = sentAt + charge_us / 1000 + ring_s * 1000 + quiet_us / 1000;
        captureStarted = true;
      }
      at += (bytes.length / USB_FS_BULK_BYTES_PER_S) * 1000;
      this.queue.push({ at_ms: at, bytes });
    }
    this.poll();
  }

  private poll(): void {
    if (this.polling) return;
    this.polling = true;
    const step = () => {
      if (this.closed) return;
      const now = this.now();
      while (this.queue.length > 0 && this.queue[0].at_ms <= now) this.splitter.push(this.queue.shift()!.bytes);
      if (this.queue.length === 0) {
        this.polling = false;
        return;
      }
      const wait = this.queue[0].at_ms - now;
      // Timers are coarse (1 ms): sleep most of a long wait, then turn the event loop until due.
      if (wait > 2) setTimeout(step, wait - 1.5);
      else setImmediate(step);
    };
    setImmediate(step);
  }

  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    this.closeHandler(null);
  }
}

/** A device client on the paced simulated tester. */
export async function connectPaced(tester: SimTester): Promise<{ client: DeviceClient; transport: BoardPacedTransport }> {
  const transport = new BoardPacedTransport(tester);
  const client = await DeviceClient.connect(transport);
  return { client, transport };
}
