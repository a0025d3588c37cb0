// The emulated board's front-end link on the host side, without QEMU: the frame codec (framing,
// CRC, resynchronisation) and the edge server's answers, which must be the very edges the
// in-process simulated tester captures for the same pulses.

import { crc16Range } from "@henrytick/shared-protocol";
import { describe, expect, it } from "vitest";
import { measurePart, openTester } from "../index.ts";
import { referenceBoard } from "./board-model.ts";
import { EdgeServer, LINK_HELLO, LINK_PULSE, LINK_REPLY, LINK_TIME, LinkFrameReader, encodeLinkFrame, tickFactor } from "./qemu-edge-server.ts";
import { loadScenario } from "./scenario.ts";
import type { CaptureEdges } from "./sim-tester.ts";

function pulseRequest(seq: number, drive: number, tank: number, charge: number, capacity: number, open: number) {
  const p = new DataView(new ArrayBuffer(16));
  p.setUint8(0, drive);
  p.setUint8(1, tank);
  p.setUint32(4, charge, true);
  p.setUint32(8, capacity, true);
  p.setUint32(12, open >>> 0, true);
  return { type: LINK_PULSE, seq, payload: new Uint8Array(p.buffer) };
}

function entries(reply: Uint8Array): number[] {
  const [f] = new LinkFrameReader().push(reply);
  const v = new DataView(f.payload.buffer, f.payload.byteOffset, f.payload.byteLength);
  return Array.from({ length: v.getUint32(0, true) }, (_, i) => v.getUint32(4 + 4 * i, true));
}

describe("front-end link frames", () => {
  it("round-trip in any chunking, skip bytes before a frame start, and drop a frame whose CRC fails", () => {
    const a = encodeLinkFrame({ type: LINK_TIME | LINK_REPLY, seq: 7, payload: new Uint8Array([1, 2, 3, 0xe5, 0x1d]) });
    const b = encodeLinkFrame({ type: LINK_HELLO, seq: 255, payload: new Uint8Array(0) });
    const bad = encodeLinkFrame({ type: LINK_PULSE, seq: 8, payload: new Uint8Array([9, 9, 9, 9]) });
    bad[7] ^= 0x01; // one bit in the payload
    const stream = new Uint8Array([0x00, 0xe5, 0x42, ...a, ...bad, ...b]);
    for (const size of [1, 3, stream.length]) {
      const reader = new LinkFrameReader();
      const got = [];
      for (let i = 0; i < stream.length; i += size) got.push(...reader.push(stream.subarray(i, i + size)));
      expect(got.map((f) => [f.type, f.seq, Array.from(f.payload)])).toEqual([[LINK_TIME | LINK_REPLY, 7, [1, 2, 3, 0xe5, 0x1d]], [LINK_HELLO, 255, []]]);
      expect(reader.rejected).toBeGreaterThanOrEqual(1);
    }
  });

  it("carries CRC-16/CCITT-FALSE over type, seq, length and payload, as the port computes it", () => {
    // Check value 0x29B1 for "123456789": the CRC catalogue's entry CRC-16/IBM-3740 (alias CCITT-FALSE).
    expect(crc16Range(new TextEncoder().encode("123456789"), 0, 9)).toBe(0x29b1);
    const f = encodeLinkFrame({ type: LINK_PULSE, seq: 0x32, payload: new TextEncoder().encode("3456789") });
    expect(Array.from(f.subarray(0, 6))).toEqual([0xe5, 0x1d, LINK_PULSE, 0x32, 7, 0]);
    expect(f[13] | (f[14] << 8)).toBe(crc16Range(f, 2, 13));
  });
});

describe("the edge server", () => {
  it("answers a measurement's pulses with exactly the edges the simulated tester captured for them", async () => {
    const s = loadScenario("drawer-choke-330u");
    const t = await openTester({ scenario: s });
    const fe = t.sim!.frontEnd;
    const asked: { args: Parameters<typeof fe.pulse>; edges: CaptureEdges }[] = [];
    const pulse = fe.pulse.bind(fe);
    fe.pulse = (...args) => {
      const edges = pulse(...args);
      asked.push({ args, edges });
      return edges;
    };
    await measurePart(t.client);
    await t.close();
    expect(asked.length).toBeGreaterThanOrEqual(2);

    const server = new EdgeServer({ board: fe.board, part: s.part, seed: s.seed });
    asked.forEach(({ args: [drive, tank, charge, capacity, open], edges }, i) => {
      const got = entries(server.answer(pulseRequest(i, drive, tank, charge, capacity, Math.floor(open)))!);
      const want = edges.ticks.slice(0, capacity).map((tick, k) => ((tick << 1) | edges.levels[k]) >>> 0);
      expect(got).toEqual(want);
    });
    expect(asked.some(({ edges }) => edges.ticks.length > 100)).toBe(true); // a real ring was among them
  });

  it("says hello with the board's id and the now() factor: 64 MHz from the 168 MHz core, crystal error included", () => {
    const board = referenceBoard();
    const server = new EdgeServer({ board, part: null, seed: 1 });
    const hello = new DataView(new ArrayBuffer(5));
    hello.setUint32(0, 168e6, true);
    const [f] = new LinkFrameReader().push(server.answer({ type: LINK_HELLO, seq: 3, payload: new Uint8Array(hello.buffer) })!);
    expect([f.type, f.seq]).toEqual([LINK_HELLO | LINK_REPLY, 3]);
    const v = new DataView(f.payload.buffer, f.payload.byteOffset);
    expect(v.getUint32(0, true)).toBe(board.device_id);
    expect(v.getUint32(4, true) / 2 ** 32).toBeCloseTo((64e6 / 168e6) * (1 + 11.5e-6), 9);
    expect(tickFactor({ ...board, timer: { ...board.timer, ppm: 0 } }, 168e6)).toBe(Math.round((64 / 168) * 2 ** 32));
    expect(() => tickFactor(board, 32e6)).toThrow(RangeError); // a slower core cannot make the tick
  });

  it("a stalled link answers nothing from the chosen pulse on; a corrupted one answers frames that fail their CRC", () => {
    const s = loadScenario("drawer-choke-330u");
    const stall = new EdgeServer({ board: referenceBoard(), part: s.part, seed: s.seed, fault: { kind: "stall", after_pulses: 1 } });
    expect(stall.answer(pulseRequest(1, 1, 2, 6336, 8192, 1000))).not.toBeNull();
    expect(stall.answer(pulseRequest(2, 1, 2, 6336, 8192, 900000))).toBeNull();
    const corrupt = new EdgeServer({ board: referenceBoard(), part: s.part, seed: s.seed, fault: { kind: "corrupt", after_pulses: 0 } });
    const reader = new LinkFrameReader();
    expect(reader.push(corrupt.answer(pulseRequest(1, 1, 2, 6336, 8192, 1000))!)).toEqual([]);
    expect(reader.rejected).toBe(1);
  });
});
