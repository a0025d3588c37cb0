// The calibration change check end to end (CLI, built host/dist, simulated tester): a reference
// entered 3 % off (340 µH for the 330 µH drawer choke the default scenario puts on the clips)
// must not silently move every tank. Truth is the simulated part (host/scenarios).

import { spawnSync } from "node:child_process";
import { existsSync, mkdtempSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { CLI } from "./run-cli.ts";

const PROFILE = "calibration-HT-5EED0001.json";

function cliIn(dir: string) {
  return (args: string[]) => {
    // stdin is not a terminal here: a large change is refused rather than asked about.
    const r = spawnSync(process.execPath, [CLI, ...args, "--config-dir", dir], { encoding: "utf8", timeout: 120_000, input: "" });
    return { status: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
  };
}

const REF_OK = ["calibrate", "reference", "--sim", "--ref-h", "330u", "--ref-u-h", "0.1u", "--repeats", "1"];
const REF_OFF = ["calibrate", "reference", "--sim", "--ref-h", "340u", "--ref-u-h", "0.1u", "--repeats", "1"];

describe("calibrate reference: the change check", () => {
  it("a first calibration 3 % off nominal is refused with CALIBRATION_SHIFT and nothing is written; --accept-shift stores it", () => {
    const dir = mkdtempSync(join(tmpdir(), "henrytick-shift-"));
    const cli = cliIn(dir);
    const r = cli(REF_OFF);
    expect(r.status).not.toBe(0);
    expect(r.stderr).toMatch(/\[CALIBRATION_SHIFT\] not stored: .*tank 3 −3\.\d\d % from its nominal value/);
    expect(r.stderr).toMatch(/--ref-h/);
    expect(r.stderr).toMatch(/--accept-shift/);
    expect(existsSync(join(dir, PROFILE))).toBe(false);
    const ok = cli([...REF_OFF, "--accept-shift"]);
    expect(ok.status).toBe(0);
    expect(existsSync(join(dir, PROFILE))).toBe(true);
  });

  it("a repeat with the right reference passes; the 3 % shift against it is refused and the profile left as it was", () => {
    const dir = mkdtempSync(join(tmpdir(), "henrytick-shift-"));
    const cli = cliIn(dir);
    expect(cli(REF_OK).status).toBe(0);
    expect(cli([...REF_OK, "--seed", "7"]).status).toBe(0);
    const before = readFileSync(join(dir, PROFILE), "utf8");
    const r = cli(REF_OFF);
    expect(r.status).not.toBe(0);
    expect(r.stderr).toMatch(/tank 0 −2\.\d\d % from its previous calibration \(limit ±0\.\d\d %\)/);
    expect(readFileSync(join(dir, PROFILE), "utf8")).toBe(before);
    const j = cli([...REF_OFF, "--json"]);
    expect(JSON.parse(j.stdout).error.code).toBe("CALIBRATION_SHIFT");
  });
});
