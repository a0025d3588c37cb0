// The command line as a bench user meets it: each command's own help with examples, --version,
// "did you mean" for a mistyped option or command, conflicting or orphan options refused, --json
// wherever results are printed and errors as JSON in --json mode.

import { mkdtempSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { HELP_TOPICS } from "../../host/src/cli/help-pages.ts";
import { listScenarios } from "../../host/src/sim/scenario.ts";
import { runCli } from "./run-cli.ts";

const tmp = mkdtempSync(join(tmpdir(), "henrytick-help-"));
const general = runCli(["--help"]).stdout;

describe("each command and sub-command has its own short help", () => {
  it.each(HELP_TOPICS)("henrytick %s --help", (topic) => {
    const r = runCli([...topic.split(" "), "--help"]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout.startsWith(`henrytick ${topic} —`)).toBe(true);
    expect(r.stdout).toMatch(/\nExamples:\n/);
    expect(r.stdout).not.toBe(general);
    expect(r.stdout.split("\n").length).toBeLessThan(70);
  });

  it("covers every command the general page names, and calibrate's sub-commands", () => {
    for (const c of ["measure", "analyze", "profile", "advise", "scenarios", "ports", "sort", "wind", "report", "sim-device", "calibrate",
      "calibrate show", "calibrate reference", "calibrate parallel", "calibrate thresholds", "calibrate skew", "calibrate timebase", "calibrate short", "calibrate open", "calibrate restore"]) {
      expect(HELP_TOPICS).toContain(c);
    }
  });

  it("henrytick help sort is sort --help", () => {
    expect(runCli(["help", "sort"]).stdout).toBe(runCli(["sort", "--help"]).stdout);
  });
});

describe("--version", () => {
  const version = JSON.parse(readFileSync(new URL("../../host/package.json", import.meta.url), "utf8")).version;
  it.each([[["--version"]], [["-V"]], [["measure", "--version"]], [["calibrate", "show", "--version"]]])("%j prints the package's version", (args) => {
    const r = runCli(args);
    expect(r.status).toBe(0);
    expect(r.stdout).toBe(`henrytick ${version}\n`);
  });
});

describe("did you mean", () => {
  it.each([
    [["measure", "--sim", "--bugdet"], /unknown option --bugdet; did you mean "--budget"\?/],
    [["sort", "--sim", "--nominl", "10u"], /did you mean "--nominal"\?/],
    [["wind", "--sim", "--taget", "22u"], /did you mean "--target"\?/],
    [["calibrate", "reference", "--sim", "--refh", "330u"], /did you mean "--ref-h"\?/],
    [["mesure", "--sim"], /unknown command "mesure"; did you mean "measure"\?/],
  ])("%j", (args, message) => {
    const r = runCli(args as string[]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(message);
  });

  it("suggests nothing for a name far from every option", () => {
    expect(runCli(["measure", "--sim", "--zzzzzzzzzz"]).stderr).not.toMatch(/did you mean/);
  });
});

describe("conflicting and orphan options are refused", () => {
  it.each([
    [["measure", "--sim", "--count", "3"], /--count works only with --watch/],
    [["measure", "--sim", "--big"], /--big works only with --watch/],
    [["measure", "--sim", "--interval-ms", "10"], /--interval-ms works only with --watch/],
    [["measure", "--sim", "--series", "E12"], /--series works only with --watch/],
    [["measure", "--sim", "--json", "--csv"], /use either --json or --csv, not both/],
    [["measure", "--sim", "--watch", "--save", join(tmp, "c.json")], /--save gives one reading/],
    [["measure", "--sim", "--watch", "--budget"], /--budget gives one reading/],
  ])("%j", (args, message) => {
    const r = runCli(args as string[]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(message);
    expect(r.stderr).not.toMatch(/probing|measuring/);
  });
});

describe("--json wherever results are printed; errors as JSON in --json mode", () => {
  it("scenarios --json lists every scenario with its inductance", () => {
    const r = runCli(["scenarios", "--json"]);
    expect(r.status).toBe(0);
    const list = JSON.parse(r.stdout);
    expect(list.map((s: { name: string }) => s.name)).toEqual(listScenarios());
    for (const s of list) expect(s.inductance_h).toBeGreaterThan(0);
  });

  it("the scenarios list is aligned: every story starts in the same column", () => {
    const lines = runCli(["scenarios"]).stdout.trimEnd().split("\n");
    const starts = lines.map((l) => l.search(/  [A-Z]/));
    expect(new Set(starts).size).toBe(1);
  });

  it("calibrate thresholds --json prints what was stored as JSON (the lines go to stderr)", () => {
    const r = runCli(["calibrate", "thresholds", "--sim", "--json", "--config-dir", join(tmp, "cal")]);
    expect(r.status, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.saved).toMatch(/calibration-.*\.json$/);
    expect(j.result.ratio).toEqual(expect.any(Number));
  });

  it.each([
    [["measure", "--sim", "--json", "--count", "3"], "USAGE", 2],
    [["measure", "--sim", "no-such-part", "--json"], "BAD_SCENARIO", 1],
    [["sort", "--sim", "--nominal", "10uF", "--tol", "5%", "--json"], "USAGE", 2],
    [["measure", "--port", "/dev/henrytick-not-here", "--json"], undefined, 1],
  ])("%j prints the error as JSON on stdout too", (args, code, status) => {
    const r = runCli(args as string[]);
    expect(r.status).toBe(status);
    const j = JSON.parse(r.stdout);
    if (code) expect(j.error.code).toBe(code);
    expect(j.error.exit_status).toBe(status);
    expect(j.error.message.length).toBeGreaterThan(10);
    expect(r.stderr).toMatch(/^henrytick: /);
  });
});
