// The shared edge list: built once from the device's arrays, found again from the capture record,
// rebuilt when the record's pairs change, and left out for malformed records (which the checks
// refuse with their own messages).

import { describe, expect, it } from "vitest";
import { EdgeList, edgesOf, pairsFor } from "./edge-list.ts";
import { ringInputFromCapture } from "../measure/capture-build.ts";
import { chatterOf } from "../measure/part-fault.ts";
import { checkCapturePlausible } from "../measure/plausibility.ts";
import type { CaptureV1 } from "./capture-file.ts";
import { captureFromDevice } from "../measure/capture-build.ts";
import { openTester } from "../open-tester.ts";

function capture(edges: [number, number][]): CaptureV1 {
  return { format: "henrytick-capture", version: 1, tick_hz: 64e6, tank_c_f: 100e-9, thresholds_v: [0.035, -0.005], edges } as CaptureV1;
}

/** A clean square ring of half-period `half` ticks (invented data). */
function ring(n: number, half: number): [number, number][] {
  return Array.from({ length: n }, (_, i) => [1000 + i * half, (i + 1) % 2] as [number, number]);
}

describe("edge list", () => {
  it("holds the decoded edges and their intervals", () => {
    const e = EdgeList.from([10, 25, 45, 70], [1, 0, 1, 0]);
    expect(e.n).toBe(4);
    expect(Array.from(e.intervals)).toEqual([15, 20, 25]);
    expect(e.toPairs()).toEqual([[10, 1], [25, 0], [45, 1], [70, 0]]);
  });

  it("is found again from the pairs it made, and the analysis input shares its arrays", () => {
    const list = EdgeList.from([10, 25, 45, 70], [1, 0, 1, 0]);
    const c = capture(pairsFor(list));
    expect(edgesOf(c)).toBe(list);
    const input = ringInputFromCapture(c);
    expect(input.ticks).toBe(list.ticks);
    expect(input.levels).toBe(list.levels);
  });

  it("is rebuilt when the pairs were changed after it was built", () => {
    const c = capture(ring(50, 500));
    const first = edgesOf(c)!;
    c.edges.pop();
    const second = edgesOf(c)!;
    expect(second).not.toBe(first);
    expect(second.n).toBe(49);
    c.edges[0] = [900, 1];
    expect(edgesOf(c)!.ticks[0]).toBe(900);
  });

  it("leaves malformed pairs to the checks that refuse them", () => {
    for (const bad of [[[10, 1], [20, 2]], [[10, 1], [20.5, 0]], [[-1, 1], [20, 0]], [[10, 1], [20, 0.5]], [[10, 1], null]]) {
      expect(edgesOf(capture(bad as [number, number][]))).toBeNull();
    }
    // The analysis still sees the values as recorded (a level of 0.5 is not turned into 0).
    const input = ringInputFromCapture(capture([[10, 1], [20, 0.5] as [number, number]]));
    expect(Array.from(input.levels)).toEqual([1, 0.5]);
  });

  it("keeps the alternation check on clean and malformed records", () => {
    expect(() => checkCapturePlausible(capture([[10, 1], [20, 1], [30, 0]]))).toThrow(/edges 0 and 1 both leave the comparator at level 1/);
    expect(() => checkCapturePlausible(capture([[10, 1], [20, 2], [30, 2]]))).toThrow(/edges 1 and 2 both leave the comparator at level 2/);
  });

  it("gives the chatter count from the shared intervals: glitch pairs and a break (invented data)", () => {
    const edges = ring(200, 500);
    expect(chatterOf(capture(edges))).toEqual({ glitch_pairs: 0, breaks: 0, half_cycles: 199 });
    // A glitch pair inside half-cycle 40, and a half-cycle at 100 stretched to 1.5x.
    const glitched: [number, number][] = [];
    for (let i = 0; i < edges.length; i++) {
      const shift = i > 100 ? 250 : 0;
      glitched.push([edges[i][0] + shift, edges[i][1]]);
      if (i === 40) glitched.push([edges[i][0] + 20, 1 - edges[i][1]], [edges[i][0] + 40, edges[i][1]]);
    }
    expect(chatterOf(capture(glitched))).toEqual({ glitch_pairs: 2, breaks: 1, half_cycles: 201 - 4 });
  });

  it("is the device decoder's own arrays from the transfer to the analysis; an edited copy gets its own", async () => {
    const t = await openTester({ part: { inductance_h: 330e-6, series_ohm: 0.5, self_capacitance_f: 0 }, seed: 2 });
    try {
      const s = { drive: 1, tank: 2, charge_us: 100, edge_limit: 8192, timeout_ms: 100, quiet_us: 500 };
      const raw = await t.client.measure(s);
      expect(raw.edges).toBeInstanceOf(EdgeList);
      expect(raw.edges!.ticks).toBeInstanceOf(Int32Array);
      expect(raw.ticks).toEqual(Array.from(raw.edges!.ticks));
      const c = captureFromDevice(raw, t.client.identity, t.client.profile, "test");
      expect(edgesOf(c)).toBe(raw.edges);
      expect(ringInputFromCapture(c).ticks).toBe(raw.edges!.ticks);
      // A copy with other edges does not carry the decoded list: its record holds what it says.
      const ticks = raw.ticks.map((k) => k + 7);
      const edited = captureFromDevice({ ...raw, ticks }, t.client.identity, t.client.profile, "test");
      expect(edited.edges[0][0]).toBe(raw.ticks[0] + 7);
      expect(edgesOf(edited)!.ticks[0]).toBe(raw.ticks[0] + 7);
    } finally {
      await t.close();
    }
  });
});
