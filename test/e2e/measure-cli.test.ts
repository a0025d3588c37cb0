// End to end: CLI -> device client -> firmware wasm in the simulated tester -> analysis.
// Ground truth is the scenario file's part. Uncalibrated, a reading divides by the tank's
// nominal value, so it carries the tank's actual deviation, the fixture's and switch node's
// capacitance and the part's own (docs/method.md §7): the simulator's expectedReading()
// gives that value from the same circuit, and the reading must match it closely, while the
// part's true inductance must lie within 0.5 % and within the stated uncertainty.

import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { loadScenario } from "../../host/src/sim/scenario.ts";
import { referenceBoard } from "../../host/src/sim/board-model.ts";
import { expectedReading } from "../../host/src/sim/front-end.ts";
import { CLI, runCli } from "./run-cli.ts";

const tmp = mkdtempSync(join(tmpdir(), "henrytick-e2e-"));

describe("henrytick measure --sim (CLI, end to end)", () => {
  it.each(["loop-antenna-1u2", "drawer-choke-330u", "filter-coil-4m7", "solenoid-valve-82m"])(
    "reads %s within half a percent of its inductance",
    (name) => {
      const r = runCli(["measure", "--sim", name, "--json"]);
      // --json keeps stderr free of progress and the routine caution (a strong caution may stay).
      expect(r.stderr.replace(/^ {3}CAUTION: .*\n/gm, "")).toBe("");
      expect(r.status).toBe(0);
      const result = JSON.parse(r.stdout);
      const part = loadScenario(name).part;
      const range = result.settings.range;
      const expected = expectedReading(referenceBoard(), part, range.drive_index, range.tank_index, result.settings.tank_c_f);
      expect(Math.abs(result.inductance_h / expected.inductance_h - 1)).toBeLessThan(0.001);
      expect(Math.abs(result.inductance_h / part.inductance_h - 1)).toBeLessThan(0.005);
      // The stated uncertainty (k = 2) must cover the error against the part's true inductance.
      expect(Math.abs(result.inductance_h - part.inductance_h)).toBeLessThan(result.inductance_u_h);
      expect(result.edges_used).toBeGreaterThanOrEqual(20);
      for (const key of ["f0_hz", "fd_hz", "inductance_h", "inductance_u_h", "q", "q_u", "esr_ohm", "edges_used", "edges_rejected", "warnings", "settings"]) {
        expect(result).toHaveProperty(key);
      }
    },
  );

  it("prints a human reading of the default demo part", () => {
    const r = runCli(["measure", "--sim"]);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/drawer-choke-330u/);
    expect(r.stdout).toMatch(/inductance\s+3\d\d\.\d µH\s+± \d\.\d µH\s+\(k = 2\)/);
    expect(r.stderr).toMatch(/measuring: drive/); // progress goes to stderr
  });

  it("analyze reproduces the reading from a saved capture", () => {
    const file = join(tmp, "choke.json");
    const measured = runCli(["measure", "--sim", "filter-coil-4m7", "--json", "--save", file]);
    expect(measured.status).toBe(0);
    const analyzed = runCli(["analyze", file, "--json"]);
    expect(analyzed.status).toBe(0);
    const a = JSON.parse(measured.stdout);
    const b = JSON.parse(analyzed.stdout);
    expect(b).toEqual(a);
    const capture = JSON.parse(readFileSync(file, "utf8"));
    expect(capture.format).toBe("henrytick-capture");
    expect(capture.version).toBe(1);
    expect(capture.edges.length).toBeGreaterThan(50);
  });

  it.each([
    ["not JSON", "{nope", /not valid JSON/],
    ["a wrong format tag", JSON.stringify({ format: "other", version: 1 }), /field "format"/],
    ["an unknown version", JSON.stringify({ format: "henrytick-capture", version: 9 }), /version 9 is not supported/],
    ["a missing tick rate", JSON.stringify({ format: "henrytick-capture", version: 1, tank_c_f: 1e-9, thresholds_v: [0.03, -0.005], edges: [] }), /field "tick_hz"/],
    ["thresholds in the wrong order", JSON.stringify({ format: "henrytick-capture", version: 1, tick_hz: 64e6, tank_c_f: 1e-9, thresholds_v: [-0.005, 0.03], edges: [] }), /rising threshold/],
    ["ticks going backwards", JSON.stringify({ format: "henrytick-capture", version: 1, tick_hz: 64e6, tank_c_f: 1e-9, thresholds_v: [0.03, -0.005], edges: [[10, 1], [5, 0]] }), /edges\[1\]/],
    ["a level of 2", JSON.stringify({ format: "henrytick-capture", version: 1, tick_hz: 64e6, tank_c_f: 1e-9, thresholds_v: [0.03, -0.005], edges: [[10, 2]] }), /level must be (0 or 1|one of 0, 1)/],
    ["no edges at all", JSON.stringify({ format: "henrytick-capture", version: 1, tick_hz: 64e6, tank_c_f: 1e-9, thresholds_v: [0.03, -0.005], edges: [] }), /EMPTY_CAPTURE/],
  ])("analyze refuses a capture with %s, naming the problem", (_what, content, message) => {
    const file = join(tmp, `bad-${Math.random().toString(36).slice(2)}.json`);
    writeFileSync(file, content);
    const r = runCli(["analyze", file, "--json"]);
    expect(r.status).toBe(1);
    expect(r.stdout).toBe("");
    expect(r.stderr).toMatch(message);
  });

  it("analyze names a file it cannot read", () => {
    const r = runCli(["analyze", join(tmp, "missing.json")]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/cannot read .*missing\.json: ENOENT/);
  });
});

describe("henrytick in a pipe", () => {
  it("stops quietly when the reader closes the pipe early", () => {
    // common command-line practice, no source: `henrytick scenarios | head -c 20` stops with no
    // EPIPE stack trace (the list is written in several pieces, so the pipe closes under it).
    const r = spawnSync("sh", ["-c", `"${process.execPath}" "${CLI}" scenarios | head -c 20 >/dev/null`], { encoding: "utf8" });
    expect(r.stderr).not.toMatch(/EPIPE|Unhandled/);
  });
});

describe("henrytick usage", () => {
  it("shows usage with the safety cautions", () => {
    const r = runCli(["--help"]);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/henrytick measure --sim/);
    expect(r.stdout).toMatch(/flyback/);
    expect(r.stdout).toMatch(/turns\s+ratio/);
    expect(r.stdout).toMatch(/local codes/);
  });

  it.each([
    [["frobnicate"], /unknown command "frobnicate"/],
    [["measure"], /say which tester/],
    [["measure", "--sim", "--port", "/dev/null"], /either --sim or --port/],
    [["measure", "--sim", "--drive", "1"], /--drive and --tank go together/],
    [["measure", "--sim", "--max-peak-v", "abc"], /--max-peak-v must be a number/],
    [["measure", "--sim", "--bogus"], /unknown option --bogus/],
    [["analyze"], /at least one capture FILE/],
  ])("refuses %j with exit status 2", (args, message) => {
    const r = runCli(args as string[]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(message);
  });

  it("names the shipped scenarios when asked for one that does not exist", () => {
    const r = runCli(["measure", "--sim", "no-such-part"]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/drawer-choke-330u/);
  });

  it("says why there is no reading when the port cannot be opened", () => {
    const r = runCli(["measure", "--port", "/dev/henrytick-not-here"]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/cannot open \/dev\/henrytick-not-here/);
  });
});

describe("machine-readable output and help", () => {
  it("measure --csv prints a header and one row whose figures match --json", () => {
    const csv = runCli(["measure", "--sim", "filter-coil-4m7", "--csv"]);
    const json = JSON.parse(runCli(["measure", "--sim", "filter-coil-4m7", "--json"]).stdout);
    expect(csv.status).toBe(0);
    const [header, row] = csv.stdout.trim().split("\n");
    const cols = header.split(",");
    const cells = row.split(",");
    expect(cols.slice(0, 2)).toEqual(["time", "label"]);
    expect(Number(cells[cols.indexOf("inductance_h")])).toBe(json.inductance_h);
    expect(Number(cells[cols.indexOf("q")])).toBe(json.q);
  });

  it("analyze --csv gives one row per file", () => {
    const file = join(tmp, "csv-capture.json");
    expect(runCli(["measure", "--sim", "drawer-choke-330u", "--save", file, "--json"]).status).toBe(0);
    const r = runCli(["analyze", file, file, "--csv"]);
    expect(r.status).toBe(0);
    expect(r.stdout.trim().split("\n")).toHaveLength(3);
  });

  it("measure --help shows the usage and exits 0", () => {
    const r = runCli(["measure", "--help"]);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/Examples:/);
  });

  it("ports lists serial ports, or says why it cannot and what to type instead", () => {
    const r = runCli(["ports"]);
    if (r.status === 0) {
      // Either the no-ports advice or one device path per line.
      const lines = r.stdout.trimEnd().split("\n");
      if (!/^no serial ports found: plug the tester in/.test(lines[0])) for (const l of lines) expect(l).toMatch(/^(\/dev\/|COM\d)/);
    } else {
      expect(r.status).toBe(1);
      expect(r.stderr).toMatch(/^henrytick: \[PORTS_UNAVAILABLE\] .*--port \/dev\/ttyACM0/);
    }
  });
});
