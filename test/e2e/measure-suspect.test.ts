// henrytick measure on a part fault, through the built CLI: the refusal (diagnosis and advice on
// stderr, exit status 1, an error object with --json) and --keep-suspect (the reading, marked in
// every output format). The part: the powder-toroid-47u demo part on a fixed strong setting, 50 mA
// through 100 ohm into 100 nF, where its core saturates (the demo itself ranges to a gentle one).

import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { loadScenario } from "../../host/src/sim/scenario.ts";
import { runCli } from "./run-cli.ts";

const dir = mkdtempSync(join(tmpdir(), "henrytick-suspect-"));
const scenario = join(dir, "toroid-driven.json");
const demo = loadScenario("powder-toroid-47u");
writeFileSync(scenario, JSON.stringify({ format: "henrytick-scenario", version: 1, name: "toroid-driven", story: "driven into saturation", part: demo.part, seed: demo.seed }));
const strong = ["measure", "--sim", scenario, "--drive", "1", "--tank", "2"];

describe("henrytick measure on a saturating core (fixed strong setting)", () => {
  it("refuses the reading: diagnosis and advice on stderr, exit status 1, no number", () => {
    const r = runCli(strong);
    expect(r.status).toBe(1);
    expect(r.stdout).toBe("");
    expect(r.stderr).toMatch(/\[CORE_SATURATING\] the inductance changes with the current/);
    expect(r.stderr).toMatch(/Lower the drive current/);
    expect(r.stderr).toMatch(/--keep-suspect/);
  });

  it("--json prints an error object with the code, and no reading", () => {
    const r = runCli([...strong, "--json"]);
    expect(r.status).toBe(1);
    const out = JSON.parse(r.stdout);
    expect(out.error.code).toBe("CORE_SATURATING");
    expect(out.error.message).toMatch(/saturation/);
    expect(out.inductance_h).toBeUndefined();
  });

  it("--keep-suspect gives the reading marked SUSPECT in human, --json and --csv output", () => {
    const human = runCli([...strong, "--keep-suspect"]);
    expect(human.status).toBe(0);
    expect(human.stdout).toMatch(/SUSPECT \(kept on request: not a verified reading\)/);
    expect(human.stdout).toMatch(/\? SUSPECT CORE_SATURATING:/);
    expect(human.stdout).toMatch(/inductance\s+4\d\.\d+ µH/);
    const json = JSON.parse(runCli([...strong, "--keep-suspect", "--json"]).stdout);
    expect(json.suspect.code).toBe("CORE_SATURATING");
    expect(json.warnings.map((w: { code: string }) => w.code)).toContain("FREQUENCY_DRIFT");
    expect(Math.abs(json.inductance_h - demo.part.inductance_h)).toBeLessThan(json.inductance_u_h);
    const [header, row] = runCli([...strong, "--keep-suspect", "--csv"]).stdout.trim().split("\n");
    expect(row.split(",")[header.split(",").indexOf("suspect")]).toBe("CORE_SATURATING");
  });

  it("a clean reading has no suspect marker (empty csv cell, no JSON key)", () => {
    const json = JSON.parse(runCli(["measure", "--sim", "powder-toroid-47u", "--json", "--keep-suspect"]).stdout);
    expect(json.suspect).toBeUndefined();
    const [header, row] = runCli(["measure", "--sim", "powder-toroid-47u", "--csv", "--keep-suspect"]).stdout.trim().split("\n");
    expect(header.split(",").at(-1)).toBe("suspect");
    expect(row.split(",").at(-1)).toBe("");
  });
});
