// The published JSON Schemas (host/schemas/, draft 2020-12) against every file the project
// writes: captures from `measure --save` (uncalibrated, calibrated, a suspect reading kept on
// request), results from `measure --json` and `analyze --json`, profiles from `calibrate`, and
// the shipped scenarios. The files are checked the way another bench application would check
// them: a fresh ajv instance given only the schema files. Then the readers: optional fields of the wrong type are refused with the project's
// coded, field-naming message. Needs the built checkout (`npm run build`).

import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, readdirSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import ajvModule from "ajv/dist/2020.js";
import { beforeAll, describe, expect, it } from "vitest";
import { CaptureFileError, parseCapture, validateCapture } from "../../host/src/capture/capture-file.ts";
import { validateProfile } from "../../host/src/calibration/profile-schema.ts";
import { ScenarioError, validateScenario } from "../../host/src/sim/scenario.ts";
import { runCli } from "./run-cli.ts";

const HOST = fileURLToPath(new URL("../../host/", import.meta.url));
const schemaFiles = readdirSync(join(HOST, "schemas")).filter((f) => f.endsWith(".schema.json")).sort();
// Strict mode and no format plugin: the schemas must compile as they are for another application.
const ajv = new ajvModule.default({ strict: true, allErrors: true });
for (const f of schemaFiles) ajv.addSchema(JSON.parse(readFileSync(join(HOST, "schemas", f), "utf8")));

function expectValid(schema: string, value: unknown, what: string) {
  const v = ajv.getSchema(`urn:henrytick:schema:${schema}:1`)!;
  expect(v, `schema ${schema}`).toBeTypeOf("function");
  const ok = v(value);
  expect(ok ? [] : v.errors, what).toEqual([]);
}

const dir = mkdtempSync(join(tmpdir(), "henrytick-schemas-"));
const configDir = join(dir, "config");
const written = { captures: [] as string[], results: [] as string[], profiles: [] as string[] };

function cli(args: string[]) {
  const r = runCli(args[0] === "analyze" ? args : [...args, "--config-dir", configDir], dir);
  expect(r.status, `henrytick ${args.join(" ")}\n${r.stderr}`).toBe(0);
  return r.stdout;
}

beforeAll(() => {
  const suspect = join(dir, "toroid-driven.json");
  const toroid = JSON.parse(readFileSync(join(HOST, "scenarios", "powder-toroid-47u.json"), "utf8"));
  writeFileSync(suspect, JSON.stringify({ ...toroid, name: "toroid-driven" }));
  // Uncalibrated readings: the default demo part ranged automatically, a fixed setting with a
  // label, and a saturating core kept on request (suspect).
  written.results.push(cli(["measure", "--sim", "--seed", "2", "--save", "plain.json", "--json"]));
  written.results.push(cli(["measure", "--sim", "filter-coil-4m7", "--drive", "2", "--tank", "2", "--label", "lot 7 #3", "--save", "fixed.json", "--json"]));
  written.results.push(cli(["measure", "--sim", suspect, "--drive", "1", "--tank", "2", "--keep-suspect", "--save", "suspect.json", "--json"]));
  // Calibrate (tank, thresholds, an entered timebase), then read with the profile in force.
  cli(["calibrate", "reference", "--sim", "--ref-h", "330u", "--ref-u-h", "1u", "--tanks", "2"]);
  cli(["calibrate", "thresholds", "--sim"]);
  cli(["calibrate", "timebase", "--sim", "--ppm", "12", "--u-ppm", "2"]);
  written.results.push(cli(["measure", "--sim", "--seed", "3", "--save", "calibrated.json", "--json"]));
  written.captures.push(...["plain.json", "fixed.json", "suspect.json", "calibrated.json"].map((f) => join(dir, f)));
  for (const c of written.captures) written.results.push(cli(["analyze", c, "--json"]));
  written.profiles.push(...readdirSync(configDir).filter((f) => f.endsWith(".json")).map((f) => join(configDir, f)));
}, 120_000);

describe("the published schemas", () => {
  it("are draft 2020-12 schemas, one per file format, with ids ajv resolves in strict mode", () => {
    expect(schemaFiles).toEqual(["calibration-profile.schema.json", "capture.schema.json", "result.schema.json", "scenario.schema.json"]);
    for (const f of schemaFiles) {
      const s = JSON.parse(readFileSync(join(HOST, "schemas", f), "utf8"));
      expect(s.$schema, f).toBe("https://json-schema.org/draft/2020-12/schema");
      expect(s.$id, f).toBe(`urn:henrytick:schema:${f.replace(".schema.json", "")}:1`);
    }
  });

  it("the validators the readers run are the committed schemas compiled as they are now", () => {
    const r = spawnSync(process.execPath, [join(HOST, "scripts", "build-validators.mjs"), "--check"], { encoding: "utf8" });
    expect(r.status, r.stderr).toBe(0);
  });

  it("every capture measure --save writes validates, calibrated and suspect ones included", () => {
    expect(written.captures).toHaveLength(4);
    for (const f of written.captures) expectValid("capture", JSON.parse(readFileSync(f, "utf8")), f);
    const calibrated = JSON.parse(readFileSync(join(dir, "calibrated.json"), "utf8"));
    expect(calibrated.calibration.tank_calibrated).toBe(true); // the calibrated branch was written
  });

  it("every result measure --json and analyze --json print validates, the suspect one included", () => {
    expect(written.results).toHaveLength(8);
    const parsed = written.results.map((r) => JSON.parse(r));
    parsed.forEach((r, i) => expectValid("result", r, `result ${i}`));
    expect(parsed.some((r) => r.suspect !== undefined)).toBe(true);
    expect(parsed.some((r) => r.label === "lot 7 #3")).toBe(true);
  });

  it("every profile calibrate writes validates (current and previous)", () => {
    const names = written.profiles.map((f) => f.slice(configDir.length + 1));
    expect(names).toHaveLength(2);
    expect(names.filter((n) => /^calibration-.+\.previous\.json$/.test(n))).toHaveLength(1);
    for (const f of written.profiles) expectValid("calibration-profile", JSON.parse(readFileSync(f, "utf8")), f);
    const current = JSON.parse(readFileSync(written.profiles.find((f) => !f.includes(".previous."))!, "utf8"));
    expect(current.tanks.length).toBeGreaterThan(0);
    expect(current.thresholds).toBeDefined();
    expect(current.timebase).toBeDefined();
  });

  it("every shipped scenario validates", () => {
    const files = readdirSync(join(HOST, "scenarios")).filter((f) => f.endsWith(".json"));
    expect(files.length).toBeGreaterThan(5);
    for (const f of files) expectValid("scenario", JSON.parse(readFileSync(join(HOST, "scenarios", f), "utf8")), f);
  });
});

describe("readers refuse what the schemas refuse, with the coded, field-naming message", () => {
  const capture = () => JSON.parse(readFileSync(join(dir, "fixed.json"), "utf8"));

  it.each([
    [(c: any) => (c.drive.series_ohm = "x"), 'capture field "drive.series_ohm": must be a finite number, got "x"'],
    [(c: any) => (c.range.tank_index = "evil"), 'capture field "range.tank_index": must be an integer, got "evil"'],
    [(c: any) => (c.range.drive_index = -1), 'capture field "range.drive_index": must not be negative, got -1'],
    [(c: any) => delete c.range.charge_us, 'capture field "range.charge_us": is missing'],
    [(c: any) => (c.device.protocol_version = "1"), 'capture field "device.protocol_version": must be an integer, got "1"'],
    [(c: any) => (c.meta.end_reason = "bored"), 'capture field "meta.end_reason": must be one of "quiet", "full", "timeout", "no-edges", got "bored"'],
    [(c: any) => (c.meta.time = "yesterday"), 'capture field "meta.time": must be an ISO 8601 time (RFC 3339 form, as 2026-12-04T19:06:22.201Z), got "yesterday"'],
    [(c: any) => (c.calibration.timebase_ppm = null), 'capture field "calibration.timebase_ppm": must be a finite number, got null'],
    [(c: any) => (c.tank_c_u_f = 0), 'capture field "tank_c_u_f": must be positive, got 0'],
    [(c: any) => (c.edges[3] = [c.edges[3][0], 2]), "capture edges[3]: level must be 0 or 1, got 2"],
    [(c: any) => (c.edges[4] = [c.edges[4][0] + 0.5, c.edges[4][1]]), "capture edges[4]: tick must be an integer"],
  ])("capture (%#)", (spoil, message) => {
    const c = capture();
    expectValid("capture", c, "before spoiling");
    spoil(c);
    expect(() => validateCapture(c)).toThrow(CaptureFileError);
    expect(() => parseCapture(JSON.stringify(c))).toThrow(message);
    // The independent check agrees: the schema itself refuses it.
    expect(ajv.getSchema("urn:henrytick:schema:capture:1")!(c)).toBe(false);
  });

  it("analyze refuses such a capture with its code and the field, exit status 1", () => {
    const c = capture();
    c.range.tank_index = "evil";
    writeFileSync(join(dir, "evil.json"), JSON.stringify(c));
    const r = runCli(["analyze", join(dir, "evil.json")], dir);
    expect(r.status).toBe(1);
    expect(r.stderr).toContain('[BAD_CAPTURE_FILE]');
    expect(r.stderr).toContain('field "range.tank_index"');
  });

  it.each([
    [(p: any) => (p.tanks[0].drive = "x"), '"tanks[0].drive": must be an integer, got "x"'],
    [(p: any) => (p.tanks[0].detail = 7), '"tanks[0].detail": must be a string, got 7'],
    [(p: any) => (p.tanks[0].method = "guess"), '"tanks[0].method": must be one of'],
    [(p: any) => (p.thresholds.u_ratio = -1), '"thresholds.u_ratio": must not be negative, got -1'],
    [(p: any) => delete p.timebase.time, '"timebase.time": is missing'],
  ])("calibration profile (%#)", (spoil, message) => {
    const p = JSON.parse(readFileSync(written.profiles.find((f) => !f.includes(".previous."))!, "utf8"));
    spoil(p);
    expect(() => validateProfile(p)).toThrow(expect.objectContaining({ code: "PROFILE_INVALID" }));
    expect(() => validateProfile(p)).toThrow(message);
  });

  it.each([
    [(s: any) => (s.story = 5), "story"],
    [(s: any) => (s.fixture = { tank_voltage_coefficient_per_v2: "x" }), "fixture.tank_voltage_coefficient_per_v2"],
    [(s: any) => (s.geometry = { turns: "many" }), "geometry.turns"],
    [(s: any) => (s.part.saturation_current_a = true), "part.saturation_current_a"],
  ])("scenario (%#)", (spoil, field) => {
    const s = JSON.parse(readFileSync(join(HOST, "scenarios", "crossover-coil-165u.json"), "utf8"));
    spoil(s);
    expect(() => validateScenario(s)).toThrow(ScenarioError);
    expect(() => validateScenario(s)).toThrow(`scenario field "${field}"`);
  });
});
