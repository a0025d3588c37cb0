// calibrate as a first-time user meets it (CLI, built host/dist, simulated tester): a bare
// reference value, a wrong reference, a timebase less certain than the stored one, a capacitor
// too small for its tank, and `calibrate show` listing every stored term. Truth is the simulated
// part of the default scenario (host/scenarios/drawer-choke-330u.json: 330 µH).

import { spawnSync } from "node:child_process";
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { DeviceClient } from "../../host/src/index.ts";
import { calibrateWithReference } from "../../host/src/calibration/index.ts";
import { measurePart } from "../../host/src/measure/measure-part.ts";
import { loadScenario } from "../../host/src/sim/scenario.ts";
import { SimTester } from "../../host/src/sim/sim-tester.ts";
import { SimTransport } from "../../host/src/transport/sim-transport.ts";
import { CLI } from "./run-cli.ts";

const PROFILE = "calibration-HT-5EED0001.json";

function cliIn(dir: string) {
  return (args: string[]) => {
    // stdin is not a terminal: what would be asked is refused instead.
    const r = spawnSync(process.execPath, [CLI, ...args, "--config-dir", dir], { encoding: "utf8", timeout: 120_000, input: "" });
    return { status: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
  };
}

describe("calibrate reference: the entered value is checked against the first reading", () => {
  it("a bare 330 is said to be read as the marking code 33 µH, and the 330 µH reference stops the procedure after its first reading", () => {
    const dir = mkdtempSync(join(tmpdir(), "henrytick-refh-"));
    const r = cliIn(dir)(["calibrate", "reference", "--sim", "--ref-h", "330", "--ref-u-h", "0.1u", "--repeats", "1"]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/--ref-h 330 is read as an inductor marking code: 33 µH \(write 330u for 330 µH\)/);
    expect(r.stderr).toMatch(/\[REFERENCE_MISMATCH\] the reference reads 33\d\.\d µH on its first ring, 33 µH was entered/);
    expect(r.stderr).toMatch(/probably 330 µH.*--ref-h 330u/);
    // No tank was rung for calibration, nothing stored.
    expect(r.stdout + r.stderr).not.toMatch(/tank \d: /);
    expect(existsSync(join(dir, PROFILE))).toBe(false);
  });

  it("the library stops after the one auto-ranged reading: no more pulses than a plain reading takes", async () => {
    const part = loadScenario("drawer-choke-330u").part;
    const plain = new SimTester({ part, seed: 3 });
    await measurePart(await DeviceClient.connect(new SimTransport(plain)));
    const sim = new SimTester({ part, seed: 3 });
    const client = await DeviceClient.connect(new SimTransport(sim));
    await expect(calibrateWithReference(client, { inductance_h: 3.3e-3, u_inductance_h: 1e-6 }, { repeats: 1 }))
      .rejects.toMatchObject({ code: "REFERENCE_MISMATCH", likely_h: 330e-6 });
    expect(sim.stats.pulses).toBe(plain.stats.pulses);
  });
});

describe("calibrate parallel: a capacitor too small for the tank is refused before any pulse", () => {
  it("OUT_OF_SPAN with values in units and the range to use; the tester is not pulsed", () => {
    const dir = mkdtempSync(join(tmpdir(), "henrytick-par-"));
    const r = cliIn(dir)(["calibrate", "parallel", "--sim", "--tank", "2", "--cap-f", "1n", "--cap-u-f", "5p"]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/\[OUT_OF_SPAN\] the added 1 nF is under 5 % of tank 2 \(100 nF\).*30 nF to 300 nF/);
    expect(r.stderr).not.toMatch(/probing|measuring|e-\d\d/);
    // Refused before the pulse caution too: nothing is about to be pulsed.
    expect(r.stderr).not.toMatch(/caution/i);
  });
});

describe("calibrate prints values with units and digits that follow their uncertainty", () => {
  it("thresholds: the ratio and the comparator offset as value ± U, no stray spaces or raw floats", () => {
    const dir = mkdtempSync(join(tmpdir(), "henrytick-thr-"));
    const r = cliIn(dir)(["calibrate", "thresholds", "--sim", "--captures", "2"]);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/ratio -?\d+\.\d+ ± \d+\.\d+, comparator offset -?\d+ µV ± \d+ µV \(k = 2\)/);
    expect(r.stdout).not.toMatch(/ {2}[±,]|\d\.\d{7,}|e-\d/);
  });
});

describe("calibrate timebase: a less certain value does not replace a better stored one", () => {
  it("a 2 s measured run after an entered ±0.5 ppm is refused (CALIBRATION_WORSE), the entered one stays; --accept-shift replaces it", () => {
    const dir = mkdtempSync(join(tmpdir(), "henrytick-tb-"));
    const cli = cliIn(dir);
    const e = cli(["calibrate", "timebase", "--sim", "--ppm", "11.5", "--u-ppm", "0.5"]);
    expect(e.status).toBe(0);
    expect(e.stdout).toMatch(/timebase in use: entered \+11\.5 ppm ± 1\.0 ppm \(k = 2\)/);
    const m = cli(["calibrate", "timebase", "--sim", "--seconds", "2"]);
    expect(m.status).toBe(1);
    expect(m.stderr).toMatch(/\[CALIBRATION_WORSE\] not stored: the new measured timebase .* is less certain than the stored entered timebase \+11\.5 ppm ± 1\.0 ppm \(k = 2\); the stored one stays in use/);
    expect(JSON.parse(readFileSync(join(dir, PROFILE), "utf8")).timebase).toMatchObject({ ppm: 11.5, u_ppm: 0.5, method: "entered" });
    const a = cli(["calibrate", "timebase", "--sim", "--seconds", "2", "--accept-shift"]);
    expect(a.status).toBe(0);
    expect(a.stdout).toMatch(/timebase in use: measured/);
    expect(JSON.parse(readFileSync(join(dir, PROFILE), "utf8")).timebase.method).toBe("host-clock");
  }, 60_000);
});

describe("calibrate show lists every stored term with its uncertainty and provenance", () => {
  const now = "2026-01-02T03:04:05.000Z";
  const profile = {
    format: "henrytick-calibration", version: 1, device_id: "HT-5EED0001", updated: now,
    tanks: [{ index: 3, nominal_f: 1e-6, c_f: 0.9962e-6, u_f: 0.3e-9, shared_u_rel: 3e-4, timebase_ppm: 0, method: "reference-inductor", time: now, detail: "reference R1 330 µH" }],
    thresholds: { ratio: -7.7, u_ratio: 0.12, thresholds_v: [0.0354, -0.0046], method: "threshold-fit", time: now, detail: "4 captures" },
    timebase: { ppm: 11.5, u_ppm: 0.5, method: "entered", time: now, detail: "counter" },
    leads: { l_h: 30.1e-9, u_h: 0.2e-9, method: "clips-shorted", time: now, detail: "3 rings" },
    skew: { skew_s: 20.3e-9, u_skew_s: 1.1e-9, method: "skew-fit", time: now, detail: "4 rings" },
  };

  it("text: the skew, leads and timebase with U (k = 2) and method, time and detail", () => {
    const dir = mkdtempSync(join(tmpdir(), "henrytick-show-"));
    writeFileSync(join(dir, PROFILE), JSON.stringify(profile));
    const r = cliIn(dir)(["calibrate", "show", "--sim"]);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/skew {9}20\.3 ns ± 2\.2 ns \(k = 2\)/);
    expect(r.stdout).toMatch(/skew-fit, 2026-01-02T03:04:05\.000Z: 4 rings/);
    expect(r.stdout).toMatch(/leads {8}30\.10 nH ± 0\.40 nH \(k = 2\)/);
    expect(r.stdout).toMatch(/clips-shorted, 2026-01-02T03:04:05\.000Z: 3 rings/);
    expect(r.stdout).toMatch(/thresholds {3}ratio -7\.70 ± 0\.24 \(k = 2\)/);
    expect(r.stdout).toMatch(/timebase {5}\+11\.5 ppm ± 1\.0 ppm \(k = 2\)/);
    expect(r.stdout).toMatch(/reference-inductor, 2026-01-02T03:04:05\.000Z: reference R1 330 µH/);
  });

  it("--json: one row per term with value, standard u, unit and provenance", () => {
    const dir = mkdtempSync(join(tmpdir(), "henrytick-show-"));
    writeFileSync(join(dir, PROFILE), JSON.stringify(profile));
    const j = JSON.parse(cliIn(dir)(["calibrate", "show", "--sim", "--json"]).stdout);
    expect(j.terms.map((t: { term: string }) => t.term)).toEqual(["tank 3", "thresholds", "timebase", "leads", "skew"]);
    expect(j.terms.find((t: { term: string }) => t.term === "skew")).toMatchObject({ value: 20.3e-9, u: 1.1e-9, unit: "s", method: "skew-fit", time: now, detail: "4 rings" });
  });
});
