import { describe, expect, it } from "vitest";
import type { ResultJson } from "../measure/result.ts";
import { parseTolerance } from "../values/tolerance.ts";
import { makeBins, binOf } from "./bins.ts";
import { RunningStats } from "./running-stats.ts";
import { SortSession } from "./sort-session.ts";

function result(l: number, u: number): ResultJson {
  return {
    f0_hz: 1e5, f0_u_hz: 1, fd_hz: 1e5, inductance_h: l, inductance_u_h: u, coverage_factor: 2, q: 50, q_u: 1,
    esr_ohm: 0.1, esr_u_ohm: 0.01, ring_amplitude_v: 1, edges_used: 100, edges_rejected: 0, warnings: [],
    settings: { tick_hz: 16e6, tank_c_f: 1e-7, thresholds_v: [0.1, -0.02], range: { drive_index: 1, tank_index: 2, charge_us: 10, edge_limit: 1000, timeout_ms: 100, quiet_us: 50 } },
  } as ResultJson;
}

describe("sort session", () => {
  it("classifies, bins, tallies and summarises", () => {
    const s = new SortSession({ nominal_h: 10e-6, tolerance: parseTolerance("5%"), lot: "L1", bins: makeBins([9.8e-6, 10.2e-6]), series: "E12" });
    const recs = [10.0, 10.42, 11.0, 9.85, 9.7].map((v) => s.add(result(v * 1e-6, 0.1e-6), "2026-01-01T00:00:00Z"));
    expect(recs.map((r) => r.decision)).toEqual(["conforming", "inconclusive", "nonconforming", "conforming", "conforming"]);
    expect(recs[1].p_conform).toBeCloseTo(0.9452, 4); // the ISO 14253-1 check value again (computed), through the session
    expect(recs.map((r) => r.bin)).toEqual(["9.80µH–10.2µH", "≥10.2µH", "≥10.2µH", "9.80µH–10.2µH", "<9.80µH"]);
    expect(recs[0].bin_certain).toBe(true);
    expect(recs[3].bin_certain).toBe(false);
    expect(recs[0].preferred_h).toBeCloseTo(10e-6, 15);
    expect(recs[0]).toMatchObject({ part: 1, lot: "L1", drive_index: 1, tank_index: 2, charge_us: 10 });
    const sum = s.summary();
    expect(sum.tally).toMatchObject({ conforming: 3, inconclusive: 1, nonconforming: 1 });
    expect(sum.stats.n).toBe(5);
    expect(sum.stats.mean).toBeCloseTo(10.194e-6, 12);
  });

  it("running statistics: mean, sample sd, Cp and Cpk (common bench practice, no source)", () => {
    const st = new RunningStats();
    for (const x of [2, 4, 4, 4, 5, 5, 7, 9]) st.add(x);
    const s = st.summary({ lower: 0, upper: 12 });
    expect(s.mean).toBe(5);
    expect(s.sd).toBeCloseTo(Math.sqrt(32 / 7), 12);
    expect(s.cp).toBeCloseTo(12 / (6 * Math.sqrt(32 / 7)), 12);
    expect(s.cpk).toBeCloseTo(5 / (3 * Math.sqrt(32 / 7)), 12);
    // Welford keeps its accuracy for a tiny spread on a large mean.
    const w = new RunningStats();
    for (const x of [1e9 + 4, 1e9 + 7, 1e9 + 13, 1e9 + 16]) w.add(x);
    expect(w.summary().sd).toBeCloseTo(Math.sqrt(30), 9);
  });

  it("bins refuse unordered edges and mark parts near an edge", () => {
    expect(() => makeBins([2, 1])).toThrow(RangeError);
    const b = makeBins([1, 2], "H", ["low", "mid", "high"]);
    expect(binOf(b, 1.5, 0.1)).toEqual({ index: 1, name: "mid", certain: true });
    expect(binOf(b, 1.95, 0.1)).toEqual({ index: 1, name: "mid", certain: false });
    expect(binOf(b, 3, 0.1).name).toBe("high");
  });
});
