// Start-up of the built CLI: a command loads only what it needs. The modules each run loads are
// recorded by the benchmark's child meter (a module hook, test/bench/sections/cli-child-meter.mjs),
// so these checks count files and name them; they time nothing (speed is in the benchmark's
// cli section). Needs the built checkout (`npm run build`).

import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import { CLI, TEST_CONFIG_DIR } from "./run-cli.ts";

const METER = fileURLToPath(new URL("../bench/sections/cli-child-meter.mjs", import.meta.url));
const work = mkdtempSync(join(tmpdir(), "henrytick-startup-"));

/** Module URLs loaded by one run of the built CLI, relative to the checkout. */
function loadedBy(args: string[]): string[] {
  const loadFile = join(work, "loaded.txt");
  const r = spawnSync(process.execPath, ["--import", METER, CLI, ...args], {
    encoding: "utf8", cwd: work, timeout: 60_000,
    env: { ...process.env, HENRYTICK_CONFIG_DIR: TEST_CONFIG_DIR, HENRYTICK_BENCH_LOAD_FILE: loadFile, HENRYTICK_BENCH_CPU_FILE: "" },
  });
  expect(r.status, r.stderr).toBe(0);
  const root = new URL("../../", import.meta.url).href;
  return readFileSync(loadFile, "utf8").split("\n").filter((u) => u.startsWith(root)).map((u) => u.slice(root.length));
}

const SERIAL = /node_modules\/@serialport\/|\/transport\/serial-transport\.js$/;
const SIMULATOR = /^host\/dist\/(sim\/(?!scenario\.js$)|physics\/|transport\/sim-transport\.js$)/;
const REPORT = /^host\/dist\/report\//;

describe("CLI start-up loads only what the command needs", () => {
  it("--help and --version load the command line's own few files: no command module, serial stack, simulator or report code", () => {
    for (const args of [["--help"], ["--version"], ["help"]]) {
      const loaded = loadedBy(args);
      expect(loaded.filter((f) => f.startsWith("host/")).sort(), args.join(" ")).toEqual(
        ["host/bin/henrytick.js", "host/dist/cli/errors.js", "host/dist/cli/help-text.js", "host/dist/cli/main.js", "host/dist/cli/safety.js", "host/dist/version.js"],
      );
      expect(loaded.filter((f) => SERIAL.test(f) || SIMULATOR.test(f) || REPORT.test(f)), args.join(" ")).toEqual([]);
    }
  });

  it("a simulated measure loads the simulator but not the serial stack or the report code", () => {
    const loaded = loadedBy(["measure", "--sim", "--seed", "1"]);
    expect(loaded.filter((f) => SIMULATOR.test(f)).length).toBeGreaterThan(0);
    expect(loaded.filter((f) => SERIAL.test(f) || REPORT.test(f))).toEqual([]);
  });

  it("scenarios and analyze load neither the serial stack nor the simulator", () => {
    const capture = join(work, "c.json");
    expect(spawnSync(process.execPath, [CLI, "measure", "--sim", "--seed", "3", "--save", capture], { env: { ...process.env, HENRYTICK_CONFIG_DIR: TEST_CONFIG_DIR } }).status).toBe(0);
    for (const args of [["scenarios"], ["analyze", capture]]) {
      const loaded = loadedBy(args);
      expect(loaded.filter((f) => SERIAL.test(f) || SIMULATOR.test(f) || REPORT.test(f)), args.join(" ")).toEqual([]);
    }
  });
});
