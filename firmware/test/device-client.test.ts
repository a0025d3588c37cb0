// The host's device client against the firmware's new commands and refusals, through the
// in-process transport: self-test, counters, the appended profile fields, and the ring
// interlock waited out like the rest interlock.

import { describe, expect, it } from "vitest";
import { openTester } from "../../host/src/open-tester.ts";

const part = { inductance_h: 330e-6, series_ohm: 0.4, self_capacitance_f: 0 };

describe("device client and firmware", () => {
  it("reads the appended profile fields", async () => {
    const t = await openTester({ part, seed: 1 });
    const p = t.client.profile;
    expect(p.drives.map((d) => d.energy_rating_j)).toEqual([0.005, 0.005, 0.0025, 0.00025]);
    expect(p.drives.every((d) => (d.rest_after_max_ms ?? 0) >= p.min_rest_ms)).toBe(true);
    expect([p.max_charge_us, p.self_test_us, p.capture_bits]).toEqual([100000, 20000, 0]);
    await t.close();
  });

  it("runs the self-test and reads the counters", async () => {
    const t = await openTester({ part, seed: 1 });
    expect(await t.client.selfTest()).toEqual({ window_us: 20000, stray_edges: 0, passed: true });
    await t.client.measure({ drive: 1, tank: 2, charge_us: 200, edge_limit: 8192, timeout_ms: 1000, quiet_us: 2000 });
    expect(await t.client.counters()).toEqual({ measurements: 1, faults: 0, rejected: 0, rx_overruns: 0 });
    await t.close();
  });

  it("waits out a ring that outlived its capture, as it waits out the rest", async () => {
    const t = await openTester({ part, seed: 1 });
    const s = { drive: 1, tank: 2, charge_us: 200, edge_limit: 20, timeout_ms: 1000, quiet_us: 2000 };
    expect((await t.client.measure(s)).end_reason).toBe("full");
    expect((await t.client.measure({ ...s, edge_limit: 8192 })).end_reason).toBe("quiet");
    expect(t.sim!.stats.pulses).toBe(2);
    await t.close();
  });
});
