// Values at the bench through the built CLI: one parser for every option (trade codes, unit and
// prefix checks, tolerance hints), one measurable range enforced up front, values printed with
// units and sensible digits.

import { mkdtempSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { MEASURABLE_TEXT } from "../../host/src/values/range.ts";
import { runCli } from "./run-cli.ts";

const tmp = mkdtempSync(join(tmpdir(), "henrytick-values-"));
const log = (name: string) => ["--log", join(tmp, name)];

describe("one value parser for every option", () => {
  it("reads 4R7 as 4.7 µH for an inductance (inductor marking, common trade practice, no source)", () => {
    const r = runCli(["sort", "--sim", "--nominal", "4R7", "--tol", "20%", "--sim-tray", "4.7u", "--settle", "1", "--json", ...log("r47")]);
    expect(r.status, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.parts[0].decision).toBe("conforming");
    expect(out.summary.limits.lower).toBeCloseTo(3.76e-6, 12);
  });

  it("reads three digits as an inductor code in µH (100 = 10 µH)", () => {
    const r = runCli(["wind", "--sim", "--target", "100", "--turns", "30", "--json"]);
    expect(r.status, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).target_h).toBeCloseTo(10e-6, 15);
  });

  it.each([
    [["wind", "--sim", "--target", "10", "--turns", "30"], /--target: "10" has no prefix: write 10u for 10 µH or 10m for 10 mH/],
    [["sort", "--sim", "--nominal", "4.7", "--tol", "5%"], /--nominal: "4\.7" has no prefix/],
    [["sort", "--sim", "--nominal", "10uF", "--tol", "5%"], /--nominal: "10uF" is a capacitance \(F\); this option takes an inductance \(H\): write 10u or 10uH/],
    [["sort", "--sim", "--nominal", "10u", "--tol", "5%", "--bins", "9u,10uF"], /--bins: "10uF" is a capacitance/],
    [["calibrate", "reference", "--sim", "--ref-h", "330uF", "--ref-u-h", "0.1u"], /--ref-h: "330uF" is a capacitance/],
    [["calibrate", "parallel", "--sim", "--tank", "2", "--cap-f", "100uH", "--cap-u-f", "1n"], /--cap-f: "100uH" is an inductance \(H\); this option takes a capacitance \(F\)/],
    [["sort", "--sim", "--nominal", "10u", "--tol", "0.5"], /--tol: tolerance "0\.5" has no unit: a relative tolerance is written 5%, 0\.5%, 50% \(0\.5 as a fraction\), an absolute one 0\.5u/],
  ])("refuses %j with a hint and exit 2, before any pulse", (args, message) => {
    const r = runCli(args as string[]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(message);
    expect(r.stderr).not.toMatch(/probing|measuring/);
  });

  it("calibrate takes the forms every other option takes (2.2 µ with a space, 330 µH)", () => {
    const dir = join(tmp, "cal");
    const r = runCli(["calibrate", "reference", "--sim", "--ref-h", "330 µH", "--ref-u-h", "0.1 µ", "--tanks", "3", "--repeats", "1", "--config-dir", dir]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/tank 3: /);
  });

  it("names the nominal with its unit, not a raw float, when a tolerance is too wide", () => {
    const r = runCli(["sort", "--sim", "--nominal", "10u", "--tol", "20u", ...log("wide")]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/for a nominal of 10 µH/);
    expect(r.stderr).not.toMatch(/0\.0000|e-\d/);
  });
});

describe("one measurable range, stated once and enforced up front", () => {
  it.each([
    [["sort", "--sim", "--nominal", "4.7H", "--tol", "5%", "--sim-tray", "4.7u", "--settle", "1"]],
    [["sort", "--sim", "--nominal", "100n", "--tol", "5%", "--sim-tray", "4.7u", "--settle", "1"]],
    [["wind", "--sim", "--target", "2H", "--turns", "30"]],
    [["calibrate", "reference", "--sim", "--ref-h", "5H", "--ref-u-h", "1m"]],
  ])("%j is refused with the range before any pulse", (args) => {
    const r = runCli([...(args as string[]), ...(args[0] === "sort" ? log("range") : [])]);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain(`outside what the tester measures, ${MEASURABLE_TEXT}`);
    expect(r.stderr).not.toMatch(/probing|measuring/);
  });

  it("README, --help and the no-ring message state the same range", () => {
    expect(MEASURABLE_TEXT).toBe("1 µH to 1 H");
    const readme = readFileSync(new URL("../../README.md", import.meta.url), "utf8");
    expect(readme).toContain(MEASURABLE_TEXT);
    expect(readme).not.toMatch(/few hundred millihenries/);
    expect(runCli(["--help"]).stdout).toContain(`measures ${MEASURABLE_TEXT}`);
  });
});
