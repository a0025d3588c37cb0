// Simulated testers' calibration profiles stay apart from real ones: in the default folder
// ($XDG_CONFIG_HOME/henrytick or ~/.config/henrytick) they go to its `simulated` subfolder, so a
// demo `calibrate … --sim` never writes into the user's real store; an explicit folder
// (--config-dir, $HENRYTICK_CONFIG_DIR) is used as given. Runs the built CLI (host/dist).

import { spawnSync } from "node:child_process";
import { existsSync, mkdtempSync, readdirSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { configDir } from "../../host/src/calibration/profile-store.ts";
import { CLI } from "../e2e/run-cli.ts";

const home = mkdtempSync(join(tmpdir(), "henrytick-home-"));
afterAll(() => rmSync(home, { recursive: true, force: true }));

function cli(args: string[]) {
  const env: Record<string, string | undefined> = { ...process.env, HOME: home };
  delete env.HENRYTICK_CONFIG_DIR;
  delete env.XDG_CONFIG_HOME;
  return spawnSync(process.execPath, [CLI, ...args], { encoding: "utf8", env, timeout: 120_000 });
}

describe("simulated testers' profiles", () => {
  it("calibrate --sim writes under the default folder's simulated/ subfolder, and measure --sim reads it there", () => {
    const r = cli(["calibrate", "timebase", "--sim", "--ppm", "3", "--u-ppm", "1"]);
    expect(r.status, r.stderr).toBe(0);
    const real = join(home, ".config", "henrytick");
    expect(readdirSync(real)).toEqual(["simulated"]);
    expect(readdirSync(join(real, "simulated"))).toEqual(["calibration-HT-5EED0001.json"]);
    const m = cli(["measure", "--sim", "--json"]);
    expect(m.status, m.stderr).toBe(0);
    expect(JSON.parse(m.stdout).settings.calibration.source).toContain(join(real, "simulated", "calibration-HT-5EED0001.json"));
    expect(existsSync(join(real, "calibration-HT-5EED0001.json"))).toBe(false);
  });

  it("the folder rules", () => {
    expect(configDir({ env: { HOME: "/h" } })).toBe("/h/.config/henrytick");
    expect(configDir({ env: { HOME: "/h" }, simulated: true })).toBe("/h/.config/henrytick/simulated");
    expect(configDir({ env: { HOME: "/h", XDG_CONFIG_HOME: "/x" }, simulated: true })).toBe("/x/henrytick/simulated");
    expect(configDir({ env: { HENRYTICK_CONFIG_DIR: "/c" }, simulated: true })).toBe("/c");
    expect(configDir({ dir: "/d", simulated: true })).toBe("/d");
  });
});
