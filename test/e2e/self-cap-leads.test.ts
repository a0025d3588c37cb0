// The two-tank corrected inductance (measure --self-cap) with the leads nulled: both rings
// include the leads in series with the part, so their inductance (calibrate short) is taken out
// of the corrected L as it is out of a one-tank reading. Truth is what the simulated board and
// part are built with (host/src/sim); 30 nH for a pair of 15 cm clip leads is common bench
// practice, no source.

import { describe, expect, it } from "vitest";
import { DeviceClient } from "../../host/src/index.ts";
import type { PartModel } from "../../host/src/index.ts";
import { appliedCalibration, emptyProfile, measureSelfCapacitance, validateProfile } from "../../host/src/calibration/index.ts";
import { measureLeadInductance } from "../../host/src/calibration/nulling.ts";
import { nominalBoard } from "../../host/src/sim/board-model.ts";
import { SHORTED_CLIPS } from "../../host/src/sim/scenario.ts";
import { SimTester } from "../../host/src/sim/sim-tester.ts";
import { SimTransport } from "../../host/src/transport/sim-transport.ts";

const LEADS_H = 30e-9;
// A small loop with a self-capacitance large enough for two tanks to see (invented demo values).
const LOOP: PartModel = { inductance_h: 1.2e-6, series_ohm: 0.012, self_capacitance_f: 1.5e-12 };

describe("measure --self-cap with the leads nulled", () => {
  it("subtracts the leads from the corrected L, with a leads line in its budget", async () => {
    // The nominal board: every tank exactly nominal, no fixture or switch node, so the truth is the part itself.
    const sim = new SimTester({ part: SHORTED_CLIPS, seed: 11, board: { ...nominalBoard(), lead_h: LEADS_H } });
    const client = await DeviceClient.connect(new SimTransport(sim));
    const leads = await measureLeadInductance(client, { repeats: 3 });
    const profile = emptyProfile(client.identity.device_id, new Date());
    profile.leads = leads.entry;
    const valid = validateProfile(JSON.parse(JSON.stringify(profile)));
    const calibration = appliedCalibration(valid, "test");
    sim.part = LOOP;
    const raw = await measureSelfCapacitance(client, {});
    const nulled = await measureSelfCapacitance(client, { profile: valid, calibration });
    // Without nulling the corrected L carries the leads: about 2.5 % high.
    expect(raw.result.inductance_h / LOOP.inductance_h - 1).toBeGreaterThan(0.015);
    // Nulled, the two readings' difference is the stored lead value, and the part is found within U.
    expect(nulled.result.inductance_h).toBeLessThan(raw.result.inductance_h - 0.5 * LEADS_H);
    expect(Math.abs(nulled.result.inductance_h - LOOP.inductance_h)).toBeLessThan(2 * nulled.result.u.inductance_h);
    const line = nulled.budget.lines.find((l) => l.group === "leads");
    expect(line?.rel_u).toBeCloseTo(leads.entry.u_h / nulled.result.inductance_h, 9);
    expect(raw.budget.lines.some((l) => l.group === "leads")).toBe(false);
    await client.close();
  }, 120_000);
});
