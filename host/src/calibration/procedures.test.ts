// The pure cores of the procedures: what they compute and what they refuse.

import { describe, expect, it } from "vitest";
import { tankCapacitanceNow, timebaseKnowledge } from "./apply-profile.ts";
import { tankFromParallel } from "./parallel-capacitor.ts";
import { emptyProfile } from "./profile-schema.ts";
import type { TankEntry } from "./profile-schema.ts";
import { referenceSpanProblem, tankFromReadings } from "./reference-inductor.ts";
import { measureTimebase, timebaseFromSamples } from "./timebase.ts";
import { ringFrequencyHz } from "./two-capacitance.ts";

const ref = { inductance_h: 330e-6, u_inductance_h: 0.33e-6 };

describe("reference inductor -> effective capacitance", () => {
  it("inverts w0^2 = 1/(L C) and carries the reference's uncertainty into every tank", () => {
    const f = ringFrequencyHz(330e-6, 10.2e-9, 0);
    const r = tankFromReadings(1, 10e-9, [{ f0_hz: f, fit_rel_u_f: 1e-5, drive: 0 }, { f0_hz: f, fit_rel_u_f: 1e-5, drive: 0 }], ref);
    expect(r.c_f / 10.2e-9).toBeCloseTo(1, 10);
    expect(r.shared_u_rel).toBeCloseTo(1e-3, 12);
    expect(r.u_f / r.c_f).toBeGreaterThan(1e-3);
  });

  it("subtracts the reference's stated self-capacitance", () => {
    const f = ringFrequencyHz(330e-6, 1e-9, 5e-12);
    const r = tankFromReadings(0, 1e-9, [{ f0_hz: f, fit_rel_u_f: 1e-5, drive: 0 }], { ...ref, self_capacitance_f: 5e-12, u_self_capacitance_f: 1e-12 });
    expect(r.c_f * 1e9).toBeCloseTo(1, 8);
  });

  it("refuses nonsense: a reference value off by a unit, a negative result, a bad uncertainty", () => {
    const f = ringFrequencyHz(330e-6, 1e-9, 0);
    expect(() => tankFromReadings(0, 1e-9, [{ f0_hz: f, fit_rel_u_f: 1e-5, drive: 0 }], { ...ref, inductance_h: 330e-3, u_inductance_h: 0.3e-3 }))
      .toThrow(expect.objectContaining({ code: "NONSENSE_RESULT" }));
    expect(() => tankFromReadings(0, 1e-9, [{ f0_hz: f, fit_rel_u_f: 1e-5, drive: 0 }], { ...ref, self_capacitance_f: 2e-9 }))
      .toThrow(expect.objectContaining({ code: "NONSENSE_RESULT" }));
    expect(() => tankFromReadings(0, 1e-9, [{ f0_hz: f, fit_rel_u_f: 1e-5, drive: 0 }], { inductance_h: 330e-6, u_inductance_h: 0 }))
      .toThrow(expect.objectContaining({ code: "BAD_REFERENCE" }));
  });

  it("says when a reference is outside a tank's usable span (too few ticks per period)", () => {
    expect(referenceSpanProblem(1e-6, 1e-9, 64e6)).toMatch(/ticks per period/);
    expect(referenceSpanProblem(330e-6, 1e-9, 64e6)).toBeNull();
  });
});

describe("known parallel capacitor -> effective tank", () => {
  it("C + Cs = Ca fb^2 / (fa^2 - fb^2), timebase-free", () => {
    const fa = ringFrequencyHz(100e-6, 10.1e-9, 3e-12);
    const fb = ringFrequencyHz(100e-6, 10.1e-9, 3e-12 + 10e-9);
    const r = tankFromParallel(1, 10e-9, { f_hz: fa, u_hz: 0.5 }, { f_hz: fb, u_hz: 0.5 }, { capacitance_f: 10e-9, u_capacitance_f: 10e-12, part_self_capacitance_f: 3e-12 });
    expect(r.c_f / 10.1e-9).toBeCloseTo(1, 9);
    expect(r.part_inductance_h / 100e-6).toBeCloseTo(1, 9);
    // The added capacitor's 0.1 % is the floor: C depends on it one to one (C ∝ Ca).
    expect(r.u_f / r.c_f).toBeGreaterThanOrEqual(1e-3);
    // Timebase: scaling both frequencies changes nothing.
    const s = tankFromParallel(1, 10e-9, { f_hz: fa * 1.0001, u_hz: 0.5 }, { f_hz: fb * 1.0001, u_hz: 0.5 }, { capacitance_f: 10e-9, u_capacitance_f: 10e-12, part_self_capacitance_f: 3e-12 });
    expect(s.c_f / r.c_f).toBeCloseTo(1, 9);
  });

  it("refuses a capacitor that did not lower the ring, or is too small to resolve", () => {
    expect(() => tankFromParallel(1, 10e-9, { f_hz: 1e5, u_hz: 1 }, { f_hz: 1.1e5, u_hz: 1 }, { capacitance_f: 10e-9, u_capacitance_f: 1e-11 }))
      .toThrow(expect.objectContaining({ code: "NONSENSE_RESULT" }));
    expect(() => tankFromParallel(1, 10e-9, { f_hz: 1e5, u_hz: 1 }, { f_hz: 0.99e5, u_hz: 1 }, { capacitance_f: 100e-12, u_capacitance_f: 1e-12 }))
      .toThrow(expect.objectContaining({ code: "OUT_OF_SPAN" }));
  });
});

describe("timebase against the host's monotonic clock", () => {
  /** A tester whose crystal runs `ppm` fast, on a virtual host clock with read latency. */
  function fakeTester(ppm: number, latency_s: number) {
    let t = 1000; // host seconds
    const tick_hz = 64e6;
    let k = 0;
    return {
      counter: {
        tick_hz,
        readTicks: async () => {
          // The counter is latched at a varying point inside the request's round trip.
          const latchAt = t + latency_s * ((k++ * 0.618) % 1);
          t += latency_s;
          return Math.floor((latchAt - 1000) * tick_hz * (1 + ppm * 1e-6) + 12345);
        },
      },
      clock: { now_s: () => t, sleep: async (s: number) => { t += s; } },
    };
  }

  it("recovers +100 ppm within its stated uncertainty; 2 ms round trips need minutes for 1 ppm", async () => {
    for (const [duration, limit] of [[60, 12], [600, 1.8]]) {
      const { counter, clock } = fakeTester(100, 2e-3);
      const r = await measureTimebase(counter, clock, duration, 13, 1);
      expect(Math.abs(r.ppm - 100)).toBeLessThan(2 * r.u_ppm);
      expect(r.u_ppm).toBeLessThan(limit);
    }
  });

  it("refuses a result no crystal could give", () => {
    const s = [0, 1, 2].map((i) => ({ before_s: i, after_s: i + 1e-3, ticks: i * 64e6 * 1.01 }));
    expect(() => timebaseFromSamples(s, 64e6)).toThrow(expect.objectContaining({ code: "NONSENSE_RESULT" }));
  });
});

describe("applying a profile", () => {
  const entry: TankEntry = { index: 0, nominal_f: 1e-9, c_f: 1e-9, u_f: 1e-12, shared_u_rel: 0, timebase_ppm: 0, method: "reference-inductor", time: "2026-01-01T00:00:00Z", detail: "" };

  it("rescales a reference-calibrated tank when the timebase correction changes: C (1+p0)^2/(1+p1)^2", () => {
    expect(tankCapacitanceNow(entry, 100).c_f / 1e-9).toBeCloseTo(1 / (1 + 100e-6) ** 2, 12);
    expect(tankCapacitanceNow({ ...entry, method: "parallel-capacitor" }, 100).c_f).toBe(1e-9);
  });

  it("treats the timebase as cancelled on a reference-calibrated tank, drift only", () => {
    const p = emptyProfile("x", new Date());
    p.tanks.push(entry);
    expect(timebaseKnowledge(p, 0)!.u_rel).toBeCloseTo(5e-6 / Math.sqrt(3), 12);
    expect(timebaseKnowledge(p, 1)).toBeUndefined();
  });
});
