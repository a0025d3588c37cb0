// Transport to the in-process simulated tester. Replies are delivered asynchronously (on the
// next turn of the event loop), as they would be from a real port.

import { SimTester } from "../sim/sim-tester.ts";
import type { Transport } from "./transport.ts";
import { LineSplitter, TransportBase, TransportError as TError } from "./transport.ts";

export class SimTransport extends TransportBase implements Transport {
  readonly description = "simulated tester";
  private readonly splitter: LineSplitter;
  private closed = false;
  private lastInput = performance.now();

  constructor(readonly tester: SimTester) {
    super();
    this.splitter = new LineSplitter((line) => this.lineHandler(line));
    tester.onOutput((bytes) => {
      setImmediate(() => {
        if (!this.closed) this.splitter.push(bytes);
      });
    });
  }

  async write(data: Uint8Array): Promise<void> {
    if (this.closed) throw new TError("simulated tester link is closed", true);
    const copy = data.slice();
    setImmediate(() => {
      if (this.closed) return;
      // Idle time on the host's clock passes on the tester too (its rest timers run down).
      const now = performance.now();
      try {
        this.tester.advance((now - this.lastInput) / 1000);
        this.lastInput = now;
        this.tester.input(copy);
      } catch (e) {
        // A fault inside the simulated firmware is the device failing, not the host: the link
        // closes with an error the client reports, and the process carries on.
        this.closed = true;
        this.closeHandler(new TError(`simulated tester fault: ${(e as Error).message}`, true));
      }
    });
  }

  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    this.closeHandler(null);
  }
}
