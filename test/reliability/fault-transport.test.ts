// The fault injector itself: each fault does to the lines what it claims, delivery keeps order,
// and the same seed damages the same lines the same way (so a failing soak can be replayed).

import { describe, expect, it } from "vitest";
import { FaultTransport } from "../../host/src/transport/fault-transport.ts";
import type { FaultOptions } from "../../host/src/transport/fault-transport.ts";
import type { Transport, TransportError } from "../../host/src/transport/transport.ts";

/** A tester stand-in: every write is answered with the given lines, synchronously. */
class EchoLink implements Transport {
  readonly description = "echo";
  written: string[] = [];
  private line: (l: string) => void = () => {};
  constructor(private readonly reply: string[]) {}
  async write(data: Uint8Array): Promise<void> {
    this.written.push(new TextDecoder("latin1").decode(data));
    for (const l of this.reply) this.line(l);
  }
  onLine(h: (l: string) => void): void {
    this.line = h;
  }
  onClose(_h: (e: TransportError | null) => void): void {}
  async close(): Promise<void> {}
}

const REPLY = ["AA 1*0000", "BB 2*0000", "CC 3*0000", "DD 4*0000"];

async function receive(opts: Omit<FaultOptions, "seed"> & { seed?: number }, arm?: (f: FaultTransport) => void, writes = 1): Promise<{ lines: string[]; f: FaultTransport }> {
  const f = new FaultTransport(new EchoLink(REPLY), { seed: 1, ...opts });
  const lines: string[] = [];
  f.onLine((l) => lines.push(l));
  arm?.(f);
  for (let i = 0; i < writes; i++) await f.write(new TextEncoder().encode("XX*0000\n"));
  await new Promise((r) => setTimeout(r, 30)); // delayed lines land within this
  return { lines, f };
}

describe("FaultTransport", () => {
  it("passes lines through untouched without faults", async () => {
    expect((await receive({})).lines).toEqual(REPLY);
  });

  it("a lost newline merges two lines; a '*' flipped to a newline splits one", async () => {
    expect((await receive({}, (f) => f.arm("drop_byte", 1, -1))).lines).toEqual([REPLY[0], REPLY[1] + REPLY[2], REPLY[3]]);
    expect((await receive({}, (f) => f.arm("flip_bit", 0, 4, 5))).lines).toEqual(["AA 1", "0000", ...REPLY.slice(1)]);
  });

  it("duplicates, swaps, and keeps order when every line is late", async () => {
    expect((await receive({}, (f) => f.arm("duplicate_line", 2))).lines).toEqual([REPLY[0], REPLY[1], REPLY[2], REPLY[2], REPLY[3]]);
    expect((await receive({}, (f) => f.arm("reorder_lines", 1))).lines).toEqual([REPLY[0], REPLY[2], REPLY[1], REPLY[3]]);
    expect((await receive({ line_delay_ms: 2 })).lines).toEqual(REPLY);
  });

  it("a reset or an endless stall cuts the output until the next command; a short stall only delays it", async () => {
    const reset = await receive({}, (f) => f.arm("reset", 1), 2);
    expect(reset.lines).toEqual([REPLY[0], ...REPLY]);
    expect((await receive({ stall_ms: Infinity }, (f) => f.arm("stall", 2))).lines).toEqual(REPLY.slice(0, 2));
    expect((await receive({ stall_ms: 5 }, (f) => f.arm("stall", 2))).lines).toEqual(REPLY);
  });

  it("garbage at connect prefixes the first reply; an unplug closes the link and fails writes", async () => {
    expect((await receive({ garbage_at_connect: "~~" })).lines[0]).toBe("~~" + REPLY[0]);
    const f = new FaultTransport(new EchoLink(REPLY), { seed: 1 });
    let closed: TransportError | null | undefined;
    f.onClose((e) => (closed = e));
    f.unplug();
    expect(closed?.disconnected).toBe(true);
    await expect(f.write(new Uint8Array([10]))).rejects.toMatchObject({ disconnected: true });
  });

  it("replays exactly from the same seed", async () => {
    const rates = { drop_byte: 0.3, flip_bit: 0.3, duplicate_line: 0.2, reorder_lines: 0.2 };
    const a = await receive({ seed: 77, rates }, undefined, 20);
    const b = await receive({ seed: 77, rates }, undefined, 20);
    const c = await receive({ seed: 78, rates }, undefined, 20);
    expect(a.lines).toEqual(b.lines);
    expect(a.f.injected).toEqual(b.f.injected);
    expect(a.lines).not.toEqual(c.lines);
  });
});
