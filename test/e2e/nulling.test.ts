// Lead nulling end to end on the simulated tester: the leads' series inductance is modelled in
// the simulator (sim/board-model.ts lead_h, a scenario's fixture.lead_inductance_h), found with
// the clips shorted, stored and subtracted. Truth is what the simulated board and parts are
// built with (host/src/sim), nothing else; 30 nH for a pair of 15 cm clip leads is common bench
// practice, no source.

import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { DeviceClient, measurePart } from "../../host/src/index.ts";
import type { PartModel } from "../../host/src/index.ts";
import { appliedCalibration, emptyProfile, singleTankBudget, validateProfile } from "../../host/src/calibration/index.ts";
import { measureLeadInductance } from "../../host/src/calibration/nulling.ts";
import { PartFaultError } from "../../host/src/measure/part-fault.ts";
import { nominalBoard, referenceBoard } from "../../host/src/sim/board-model.ts";
import type { BoardModel } from "../../host/src/sim/board-model.ts";
import { expectedReading } from "../../host/src/sim/front-end.ts";
import { SHORTED_CLIPS } from "../../host/src/sim/scenario.ts";
import { SimTester } from "../../host/src/sim/sim-tester.ts";
import { SimTransport } from "../../host/src/transport/sim-transport.ts";
import { CLI } from "./run-cli.ts";

const LEADS_H = 30e-9;
const LOOP: PartModel = { inductance_h: 1.2e-6, series_ohm: 0.012, self_capacitance_f: 1.5e-12 };

async function open(board: BoardModel, part: PartModel | null, seed: number) {
  const sim = new SimTester({ part, seed, board });
  const client = await DeviceClient.connect(new SimTransport(sim));
  return { sim, client };
}

describe("shorted clips are recognised, not read as a part", () => {
  const board = { ...referenceBoard(), lead_h: LEADS_H };

  it("a fixed setting on which the 30 nH of shorted leads rings is refused as PART_SHORTED, pointing at calibrate short", async () => {
    const { client } = await open(board, SHORTED_CLIPS, 3);
    const e = await measurePart(client, { drive: 0, tank: 2 }).then(() => null, (x: unknown) => x);
    expect(e).toBeInstanceOf(PartFaultError);
    expect((e as PartFaultError).code).toBe("PART_SHORTED");
    expect((e as PartFaultError).message).toMatch(/henrytick calibrate short/);
    // The would-be reading travels with the error: the leads alone (simulator truth through the nominal tank).
    const truth = expectedReading(board, SHORTED_CLIPS, 0, 2, client.profile.tanks[2].nominal_f).inductance_h;
    const s = (e as PartFaultError).suspect!;
    expect(Math.abs(s.analysis.inductance_h - truth)).toBeLessThan(s.analysis.inductance_u_h);
  });

  it("automatic ranging on shorted clips says so and suggests calibrate short", async () => {
    const { client } = await open(board, SHORTED_CLIPS, 4);
    const e = await measurePart(client).then(() => null, (x: unknown) => x);
    expect((e as PartFaultError).code).toBe("PART_SHORTED");
    expect((e as PartFaultError).message).toMatch(/henrytick calibrate short/);
  });
});

describe("calibrate short: the leads' inductance found, stored and subtracted", () => {
  it("recovers the simulated leads within the stated uncertainty", async () => {
    const board = { ...referenceBoard(), lead_h: LEADS_H };
    const { client } = await open(board, SHORTED_CLIPS, 5);
    const out = await measureLeadInductance(client, { repeats: 3 });
    // Truth: the ring of the leads alone on that setting, read through the nominal tank.
    const truth = expectedReading(board, SHORTED_CLIPS, out.drive, out.tank, client.profile.tanks[out.tank].nominal_f).inductance_h;
    expect(out.entry.method).toBe("clips-shorted");
    expect(Math.abs(out.entry.l_h - truth)).toBeLessThan(2 * out.entry.u_h);
    expect(out.entry.u_h / out.entry.l_h).toBeLessThan(0.02);
  });

  it("refuses when nothing but a bare short rings (no lead inductance to ring with)", async () => {
    const { client } = await open(referenceBoard(), SHORTED_CLIPS, 6);
    await expect(measureLeadInductance(client, { repeats: 1 })).rejects.toMatchObject({ code: "OUT_OF_SPAN" });
  });

  it("refuses a part left on the clips (reads above any lead inductance)", async () => {
    const { client } = await open(referenceBoard(), { inductance_h: 0.8e-6, series_ohm: 0.02, self_capacitance_f: 0 }, 7);
    await expect(measureLeadInductance(client, { repeats: 1 })).rejects.toMatchObject({ code: "NONSENSE_RESULT" });
  });

  it("a 1.2 µH loop through 30 nH leads reads 2.5 % high; nulled, it reads its own inductance within U, and the budget says so", async () => {
    // The nominal board: every tank exactly nominal, no fixture or switch node, so the truth is the part itself.
    const board = { ...nominalBoard(), lead_h: LEADS_H };
    const { sim, client } = await open(board, SHORTED_CLIPS, 8);
    const leads = await measureLeadInductance(client, { repeats: 3 });
    const profile = emptyProfile(client.identity.device_id, new Date());
    profile.leads = leads.entry;
    const cal = appliedCalibration(validateProfile(JSON.parse(JSON.stringify(profile))), "test");
    sim.part = LOOP;
    const raw = await measurePart(client);
    const nulled = await measurePart(client, { calibration: cal });
    expect(raw.analysis.inductance_h / LOOP.inductance_h - 1).toBeGreaterThan(0.02);
    expect(Math.abs(nulled.analysis.inductance_h - LOOP.inductance_h)).toBeLessThan(nulled.analysis.inductance_u_h);
    expect(nulled.capture.calibration?.lead_inductance_h).toBe(leads.entry.l_h);
    const b = singleTankBudget(nulled.analysis, nulled.capture.tank_c_f);
    const line = b.lines.find((l) => l.group === "leads")!;
    expect(line.rel_u).toBeCloseTo(leads.entry.u_h / nulled.analysis.inductance_h, 6);
  });

  it("a profile with leads beyond shorted clips is refused, naming the field", () => {
    const p = { ...emptyProfile("HT-1", new Date()), leads: { l_h: 2e-6, u_h: 1e-9, method: "clips-shorted", time: new Date().toISOString(), detail: "" } };
    expect(() => validateProfile(p)).toThrow(/"leads\.l_h"/);
  });
});

describe("henrytick calibrate short (CLI, built host/dist)", () => {
  const dir = mkdtempSync(join(tmpdir(), "henrytick-cli-null-"));
  const cli = (args: string[]) => {
    const r = spawnSync(process.execPath, [CLI, ...args, "--config-dir", dir], { encoding: "utf8", timeout: 120_000 });
    return { status: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
  };

  it("nulls the demo scenario's leads; measure then subtracts them and shows the leads in the budget", () => {
    const before = JSON.parse(cli(["measure", "--sim", "loop-antenna-on-leads", "--json"]).stdout);
    const cal = cli(["calibrate", "short", "--sim", "loop-antenna-on-leads"]);
    expect(cal.status).toBe(0);
    expect(cal.stdout).toMatch(/leads: 30\.\d+ nH ± .* \(k = 2\)/);
    const stored = JSON.parse(readFileSync(join(dir, "calibration-HT-5EED0001.json"), "utf8"));
    expect(stored.leads.method).toBe("clips-shorted");
    const after = JSON.parse(cli(["measure", "--sim", "loop-antenna-on-leads", "--json", "--budget"]).stdout);
    expect(before.inductance_h - after.inductance_h).toBeCloseTo(stored.leads.l_h, 10);
    expect(after.settings.calibration.lead_inductance_h).toBe(stored.leads.l_h);
    expect(after.budget.lines.map((l: { group: string }) => l.group)).toContain("leads");
    expect(cli(["calibrate", "show", "--sim"]).stdout).toMatch(/leads {8}30\.\d+ nH/);
  });
});
