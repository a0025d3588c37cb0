// Open nulling end to end on the simulated tester: the fixture's capacitance across the part is
// modelled in the simulator (sim/board-model.ts fixture_f, a scenario's fixture.capacitance_f),
// removed while the part sits on the board's own terminals (SimTester.onTerminals), found by
// ringing one coil on two tanks in both places, stored, and added to every tank whose value does
// not hold it. Truth is what the simulated board and parts are built with (host/src/sim), nothing
// else; the 18 pF jig and its 80 nH of leads are invented demo values.

import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { DeviceClient, measurePart } from "../../host/src/index.ts";
import type { PartModel } from "../../host/src/index.ts";
import { appliedCalibration, emptyProfile, measureSelfCapacitance, singleTankBudget, validateProfile, withEntry, withTankEntries } from "../../host/src/calibration/index.ts";
import { measureFixtureCapacitance } from "../../host/src/calibration/open-nulling.ts";
import { analyzeCapture } from "../../host/src/measure/read-once.ts";
import { referenceBoard } from "../../host/src/sim/board-model.ts";
import type { BoardModel } from "../../host/src/sim/board-model.ts";
import { expectedReading } from "../../host/src/sim/front-end.ts";
import { SimTester } from "../../host/src/sim/sim-tester.ts";
import { SimTransport } from "../../host/src/transport/sim-transport.ts";
import { CLI } from "./run-cli.ts";

const FIXTURE_F = 18e-12;
const CHOKE: PartModel = { inductance_h: 47e-6, series_ohm: 0.4, self_capacitance_f: 2e-12 };

async function open(board: BoardModel, part: PartModel | null, seed: number) {
  const sim = new SimTester({ part, seed, board });
  const client = await DeviceClient.connect(new SimTransport(sim));
  const place = async (where: "terminals" | "clips") => { sim.onTerminals = where === "terminals"; };
  return { sim, client, place };
}

describe("calibrate open: the fixture's capacitance found from one coil on the terminals and on the clips", () => {
  it("recovers the simulated 18 pF within its expanded uncertainty, whatever the coil's own Cs and the leads' inductance", async () => {
    const board = { ...referenceBoard(), fixture_f: FIXTURE_F, lead_h: 80e-9 };
    for (const seed of [1, 2]) {
      const { client, place } = await open(board, CHOKE, seed);
      const out = await measureFixtureCapacitance(client, place, { repeats: 3 });
      expect(out.entry.method).toBe("terminals-vs-clips");
      expect(out.tanks).toEqual([0, 1]);
      expect(Math.abs(out.c_f - FIXTURE_F)).toBeLessThan(2 * out.u_f);
      expect(out.u_f).toBeLessThan(0.5e-12);
      // By-products: the two-tank L on the terminals, and the leads' inductance the clips add to it.
      expect(Math.abs(out.leads_h - 80e-9)).toBeLessThan(10e-9);
    }
  });

  it("recovers the reference board's own 2.5 pF of clip leads", async () => {
    const board = referenceBoard();
    const { client, place } = await open(board, { inductance_h: 330e-6, series_ohm: 0.9, self_capacitance_f: 8e-12 }, 3);
    const out = await measureFixtureCapacitance(client, place, { repeats: 3 });
    expect(Math.abs(out.c_f - board.fixture_f)).toBeLessThan(2 * out.u_f);
  });

  it("refuses when the coil on the clips is not the one rung on the terminals", async () => {
    const { sim, client } = await open({ ...referenceBoard(), fixture_f: FIXTURE_F }, CHOKE, 4);
    const swap = async (where: "terminals" | "clips") => {
      sim.onTerminals = where === "terminals";
      if (where === "clips") sim.part = { ...CHOKE, inductance_h: 56e-6 };
    };
    await expect(measureFixtureCapacitance(client, swap, { repeats: 1 })).rejects.toMatchObject({ code: "NONSENSE_RESULT" });
  });

  it("a profile with a fixture beyond any clips and leads is refused, naming the field", () => {
    const p = { ...emptyProfile("HT-1", new Date()), fixture: { c_f: 2e-9, u_f: 1e-12, method: "terminals-vs-clips", time: new Date().toISOString(), detail: "" } };
    expect(() => validateProfile(p)).toThrow(/"fixture\.c_f"/);
  });
});

describe("the fixture in readings: added where the tank's value lacks it, never twice", () => {
  const board = { ...referenceBoard(), fixture_f: FIXTURE_F, lead_h: 0 };

  it("on an uncalibrated 1 nF tank the choke reads 1.8 % high; nulled, it reads what it reads on the terminals, within U, and the budget has a fixture line", async () => {
    const { sim, client, place } = await open(board, CHOKE, 5);
    const fx = await measureFixtureCapacitance(client, place, { repeats: 3 });
    const profile = withEntry(emptyProfile(client.identity.device_id, new Date()), "fixture", fx.entry);
    const cal = appliedCalibration(validateProfile(JSON.parse(JSON.stringify(profile))), "test");
    sim.onTerminals = false;
    const raw = await measurePart(client, { drive: 1, tank: 0 });
    const nulled = await measurePart(client, { drive: 1, tank: 0, calibration: cal });
    // Simulator truth: the choke on the terminals (no fixture) through the nominal 1 nF.
    const onTerminals = expectedReading({ ...board, fixture_f: 0 }, CHOKE, 1, 0, client.profile.tanks[0].nominal_f).inductance_h;
    expect(raw.analysis.inductance_h / onTerminals - 1).toBeGreaterThan(0.015);
    expect(Math.abs(nulled.analysis.inductance_h - onTerminals)).toBeLessThan(nulled.analysis.inductance_u_h);
    expect(nulled.capture.calibration?.fixture_capacitance_f).toBe(fx.entry.c_f);
    expect(nulled.capture.tank_c_f).toBeCloseTo(client.profile.tanks[0].nominal_f + fx.entry.c_f, 20);
    const line = singleTankBudget(nulled.analysis, nulled.capture.tank_c_f).lines.find((l) => l.group === "fixture")!;
    expect(line.rel_u).toBeCloseTo(fx.entry.u_f / nulled.capture.tank_c_f, 9);
    // A saved capture re-analyses to the same value and U.
    const again = analyzeCapture(JSON.parse(JSON.stringify(nulled.capture)));
    expect(again.inductance_h).toBe(nulled.analysis.inductance_h);
    expect(again.inductance_u_h).toBe(nulled.analysis.inductance_u_h);
    // A tank value that is neither nominal nor nominal plus the recorded fixture is an edited capture.
    const edited = JSON.parse(JSON.stringify(nulled.capture));
    edited.calibration.fixture_capacitance_f *= 2;
    expect(() => analyzeCapture(edited)).toThrow(expect.objectContaining({ code: "TANK_IMPLAUSIBLE" }));
  });

  it("the two-tank self-capacitance leaves the fixture out: the same rings give Cs lower by the fixture, with its u as an offset both tanks share", async () => {
    // A large u_f (3 pF, invented) so that its share of u(Cs) stands out of the rings' own.
    const fixture = { c_f: 18e-12, u_f: 3e-12, method: "terminals-vs-clips" as const, time: new Date().toISOString(), detail: "" };
    const run = async (withFixture: boolean) => {
      const { client } = await open(board, CHOKE, 7);
      const p = withFixture ? withEntry(emptyProfile(client.identity.device_id, new Date()), "fixture", fixture) : emptyProfile(client.identity.device_id, new Date());
      return measureSelfCapacitance(client, { profile: p, calibration: appliedCalibration(p, "test"), tanks: [0, 1] });
    };
    const without = await run(false);
    const nulled = await run(true);
    // C_i + Cf in both tanks: Cs = (f2² C2 − f1² C1)/(f1² − f2²) moves by exactly −Cf for the same
    // rings; the two runs' rings differ only by the noise draw (about 0.01 pF here).
    expect(Math.abs(without.result.self_capacitance_f - nulled.result.self_capacitance_f - 18e-12)).toBeLessThan(0.1e-12);
    expect(Math.sqrt(nulled.result.u.self_capacitance_f ** 2 - without.result.u.self_capacitance_f ** 2)).toBeCloseTo(3e-12, 13);
  });

  it("a tank calibrated through the clips already holds the fixture: nothing is added; one calibrated on the terminals gets it", async () => {
    const fixture = { c_f: 18e-12, u_f: 0.2e-12, method: "terminals-vs-clips" as const, time: new Date().toISOString(), detail: "" };
    const tank = { index: 0, nominal_f: 1e-9, c_f: 1.04e-9, u_f: 1e-12, shared_u_rel: 0, timebase_ppm: 0, method: "reference-inductor" as const, time: fixture.time, detail: "" };
    const { client } = await open(board, CHOKE, 6);
    const through = appliedCalibration(withTankEntries(withEntry(emptyProfile(client.identity.device_id, new Date()), "fixture", fixture), [tank]), "test");
    const r1 = await measurePart(client, { drive: 1, tank: 0, calibration: through });
    expect(r1.capture.tank_c_f).toBe(1.04e-9);
    expect(r1.capture.calibration?.fixture_capacitance_f).toBeUndefined();
    expect(r1.analysis.budget.map((b) => b.name)).not.toContain("fixture");
    const bare = appliedCalibration(withTankEntries(withEntry(emptyProfile(client.identity.device_id, new Date()), "fixture", fixture), [{ ...tank, c_f: 1.022e-9, fixture_included: false }]), "test");
    const r2 = await measurePart(client, { drive: 1, tank: 0, calibration: bare });
    expect(r2.capture.tank_c_f).toBeCloseTo(1.04e-9, 20);
    expect(r2.capture.calibration?.fixture_capacitance_f).toBe(18e-12);
  });
});

describe("henrytick calibrate open (CLI, built host/dist)", () => {
  const dir = mkdtempSync(join(tmpdir(), "henrytick-cli-open-"));
  const cli = (args: string[]) => {
    const r = spawnSync(process.execPath, [CLI, ...args, "--config-dir", dir], { encoding: "utf8", timeout: 120_000 });
    return { status: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
  };

  it("nulls the jig scenario's 18 pF; measure on the 1 nF tank then adds it, records it, and shows the fixture in the budget and in show", () => {
    const before = JSON.parse(cli(["measure", "--sim", "rf-choke-in-jig", "--freq", "700k", "--json"]).stdout);
    const cal = cli(["calibrate", "open", "--sim", "rf-choke-in-jig"]);
    expect(cal.status).toBe(0);
    expect(cal.stdout).toMatch(/fixture: 1[78]\.\d+ pF ± 0\.\d+ pF \(k = 2\)/);
    const stored = JSON.parse(readFileSync(join(dir, "calibration-HT-5EED0001.json"), "utf8"));
    expect(stored.fixture.method).toBe("terminals-vs-clips");
    expect(Math.abs(stored.fixture.c_f - 18e-12)).toBeLessThan(2 * stored.fixture.u_f);
    const after = JSON.parse(cli(["measure", "--sim", "rf-choke-in-jig", "--freq", "700k", "--json", "--budget"]).stdout);
    expect(after.settings.calibration.fixture_capacitance_f).toBe(stored.fixture.c_f);
    expect(after.budget.lines.map((l: { group: string }) => l.group)).toContain("fixture");
    // L ∝ 1/C: the reading falls by the fixture's share of the tank.
    expect(before.inductance_h / after.inductance_h - 1).toBeCloseTo(stored.fixture.c_f / after.settings.calibration.nominal_tank_c_f, 3);
    const show = cli(["calibrate", "show", "--sim"]).stdout;
    expect(show).toMatch(/fixture {6}1[78]\.\d+ pF ± 0\.\d+ pF \(k = 2\); the clips' and leads' capacitance/);
    expect(show).toMatch(/terminals-vs-clips, /);
  });

  it("the whole chain recovers the simulated choke: reference on the terminals, open on the jig, short; the 1 nF reading is 47 µH within U", () => {
    const d = mkdtempSync(join(tmpdir(), "henrytick-cli-chain-"));
    const run = (args: string[]) => spawnSync(process.execPath, [CLI, ...args, "--config-dir", d], { encoding: "utf8", timeout: 120_000 });
    const ref = run(["calibrate", "reference", "--sim", "rf-choke-in-jig", "--on-terminals", "--ref-h", "47u", "--ref-u-h", "0.05u", "--ref-cs-f", "2p", "--ref-u-cs-f", "0.2p", "--tanks", "0,1"]);
    expect(ref.status, ref.stderr).toBe(0);
    const stored = JSON.parse(readFileSync(join(d, "calibration-HT-5EED0001.json"), "utf8"));
    expect(stored.tanks.map((t: { fixture_included: boolean }) => t.fixture_included)).toEqual([false, false]);
    expect(run(["calibrate", "open", "--sim", "rf-choke-in-jig"]).status).toBe(0);
    expect(run(["calibrate", "short", "--sim", "rf-choke-in-jig"]).status).toBe(0);
    const r = JSON.parse(run(["measure", "--sim", "rf-choke-in-jig", "--freq", "700k", "--json"]).stdout);
    expect(r.settings.range.tank_index).toBe(0);
    // Truth: the scenario's 47 µH (host/scenarios/rf-choke-in-jig.json); its 2 pF Cs stays in the apparent value (+0.2 %).
    expect(Math.abs(r.inductance_h - 47e-6 * (1 + 2e-12 / 1.0031e-9))).toBeLessThan(r.inductance_u_h);
    expect(r.settings.calibration.fixture_capacitance_f).toBeGreaterThan(15e-12);
  });
});
