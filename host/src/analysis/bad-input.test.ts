import { describe, expect, it } from "vitest";
import { AnalysisError, analyzeRing, type RingInput } from "./index.ts";

/** A clean synthetic ring (20 cycles, 64 MHz ticks) to corrupt one field at a time. */
function good(): RingInput {
  const w = 2 * Math.PI * 100e3;
  const ticks: number[] = [];
  const levels: number[] = [];
  for (let m = 0; m < 40; m++) {
    const a = Math.exp(-w * (m / w) * Math.PI / 60); // A at the edge, Q about 30
    const delay = Math.asin((m % 2 === 0 ? 0.035 : 0.005) / a);
    ticks.push(Math.floor(((m * Math.PI + delay) / w) * 64e6));
    levels.push(m % 2 === 0 ? 1 : 0);
  }
  return { tick_hz: 64e6, ticks, levels, tank_c_f: 10e-9, thresholds_v: [0.035, -0.005] };
}

function codeOf(f: () => unknown): string {
  try {
    f();
  } catch (e) {
    expect(e).toBeInstanceOf(AnalysisError);
    expect((e as AnalysisError).message.length).toBeGreaterThan(30); // says what to do next
    return (e as AnalysisError).code;
  }
  return "no error";
}

describe("bad input gives a clear error, never a number", () => {
  it("accepts the clean capture these cases are made from", () => {
    expect(analyzeRing(good()).q).toBeGreaterThan(10);
  });

  it.each([
    ["empty capture", (i: RingInput) => ({ ...i, ticks: [], levels: [] }), "EMPTY_CAPTURE"],
    ["a single edge", (i: RingInput) => ({ ...i, ticks: [5], levels: [1] }), "TOO_FEW_EDGES"],
    ["five edges", (i: RingInput) => ({ ...i, ticks: [...i.ticks].slice(0, 5), levels: [...i.levels].slice(0, 5) }), "TOO_FEW_EDGES"],
    ["non-monotonic ticks", (i: RingInput) => ({ ...i, ticks: [...i.ticks].map((t, k) => (k === 7 ? 1 : t)) }), "BAD_INPUT"],
    ["NaN tick", (i: RingInput) => ({ ...i, ticks: [...i.ticks].map((t, k) => (k === 3 ? NaN : t)) }), "BAD_INPUT"],
    ["fractional tick", (i: RingInput) => ({ ...i, ticks: [...i.ticks].map((t, k) => (k === 3 ? t + 0.5 : t)) }), "BAD_INPUT"],
    ["negative tick", (i: RingInput) => ({ ...i, ticks: [-1, ...[...i.ticks].slice(1)] }), "BAD_INPUT"],
    ["tick beyond 2^53", (i: RingInput) => ({ ...i, ticks: [...[...i.ticks].slice(0, -1), 2 ** 60] }), "BAD_INPUT"],
    ["level 2", (i: RingInput) => ({ ...i, levels: [...i.levels].map((l, k) => (k === 4 ? 2 : l)) }), "BAD_INPUT"],
    ["level NaN", (i: RingInput) => ({ ...i, levels: [...i.levels].map((l, k) => (k === 4 ? NaN : l)) }), "BAD_INPUT"],
    ["mismatched lengths", (i: RingInput) => ({ ...i, levels: [...i.levels].slice(1) }), "BAD_INPUT"],
    ["huge count", (i: RingInput) => ({ ...i, ticks: { length: 2e7 } as ArrayLike<number>, levels: { length: 2e7 } as ArrayLike<number> }), "BAD_INPUT"],
    ["zero tick rate", (i: RingInput) => ({ ...i, tick_hz: 0 }), "BAD_INPUT"],
    ["infinite tick rate", (i: RingInput) => ({ ...i, tick_hz: Infinity }), "BAD_INPUT"],
    ["negative capacitance", (i: RingInput) => ({ ...i, tank_c_f: -1e-9 }), "BAD_INPUT"],
    ["NaN capacitance", (i: RingInput) => ({ ...i, tank_c_f: NaN }), "BAD_INPUT"],
    ["thresholds in the wrong order", (i: RingInput) => ({ ...i, thresholds_v: [-0.005, 0.035] as [number, number] }), "BAD_INPUT"],
    ["NaN threshold", (i: RingInput) => ({ ...i, thresholds_v: [NaN, -0.005] as [number, number] }), "BAD_INPUT"],
    ["negative capacitance uncertainty", (i: RingInput) => ({ ...i, tank_c_u_f: -1e-12 }), "BAD_INPUT"],
    ["NaN timebase uncertainty", (i: RingInput) => ({ ...i, timebase_u_rel: NaN }), "BAD_INPUT"],
    ["ring_ended not a boolean", (i: RingInput) => ({ ...i, ring_ended: 1 as unknown as boolean }), "BAD_INPUT"],
  ])("%s", (_name, corrupt, code) => {
    expect(codeOf(() => analyzeRing(corrupt(good())))).toBe(code);
  });

  it("reports NO_RING for edges that are not a ring", () => {
    // Random, unrelated edge times (alternating levels): no damped sine explains them.
    const ticks: number[] = [];
    const levels: number[] = [];
    let t = 0;
    let seed = 12345;
    for (let k = 0; k < 60; k++) {
      seed = (seed * 1103515245 + 12345) % 2147483648;
      t += 10 + (seed % 5000);
      ticks.push(t);
      levels.push(k % 2 === 0 ? 1 : 0);
    }
    const r = (() => {
      try {
        return analyzeRing({ tick_hz: 64e6, ticks, levels, tank_c_f: 10e-9, thresholds_v: [0.035, -0.005] });
      } catch (e) {
        return e as AnalysisError;
      }
    })();
    // Either refused outright, or fitted with loud warnings: never a quiet number.
    if (r instanceof AnalysisError) expect(r.code).toBe("NO_RING");
    else expect(r.warnings.map((w) => w.code)).toEqual(expect.arrayContaining(["POOR_FIT"]));
  });

  it("reports NO_RING for an overdamped part (two edges and nothing after)", () => {
    const i = good();
    const ticks = [100, 900, 950, 5000, 5030, 90000];
    expect(codeOf(() => analyzeRing({ ...i, ticks, levels: [1, 0, 1, 0, 1, 0] }))).toBe("NO_RING");
  });
});
