// Line-level access to the firmware in the simulated tester, below the device client, so tests
// can send malformed frames and read every reply line.

import { SimTester } from "../../host/src/sim/sim-tester.ts";
import type { SimTesterOptions } from "../../host/src/sim/sim-tester.ts";
import { decodeLine, encodeCommand } from "../../host/src/device/frames.ts";
import type { Frame } from "../../host/src/device/frames.ts";

export class SimLink {
  readonly sim: SimTester;
  private pending = "";
  constructor(opts: Partial<SimTesterOptions> = {}) {
    this.sim = new SimTester({
      part: opts.part === undefined ? { inductance_h: 330e-6, series_ohm: 0.4, self_capacitance_f: 0 } : opts.part, seed: opts.seed ?? 1, board: opts.board, firmware: opts.firmware, raw_capture: opts.raw_capture,
    });
    this.sim.onOutput((b) => {
      this.pending += new TextDecoder().decode(b);
    });
  }

  /** Sends raw text; returns the complete lines received in reply. */
  raw(text: string): string[] {
    this.sim.input(new TextEncoder().encode(text));
    const lines = this.pending.split("\n");
    this.pending = lines.pop() ?? "";
    return lines;
  }

  /** Sends a well-formed command; returns the decoded reply frames (throws on a corrupt reply). */
  send(tag: string, ...args: number[]): Frame[] {
    return this.raw(new TextDecoder().decode(encodeCommand(tag, args))).map((l) => {
      const d = decodeLine(l);
      if (!d.ok) throw new Error(`corrupt reply line ${JSON.stringify(l)}`);
      return d.frame;
    });
  }
}

/** Frame as "TAG f1 f2" for compact assertions. */
export const show = (f: Frame) => [f.tag, ...f.fields].join(" ");
