// Bench sessions through the built CLI: a save path checked before the pulse, CSV appended to a
// log, sort logs in fresh folders, one JSON type for warnings, next steps that fit the cause, a
// winding session that survives a typo, a self-capacitance that is not determined.

import { spawn, spawnSync } from "node:child_process";
import { existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { CLI, runCli, TEST_CONFIG_DIR } from "./run-cli.ts";

const tmp = mkdtempSync(join(tmpdir(), "henrytick-sessions-"));

describe("measure --save is checked before the part is pulsed", () => {
  it.each([
    ["a folder", () => {
      const d = join(tmp, "adir");
      mkdirSync(d, { recursive: true });
      return d;
    }, /is a folder; give a file name in it/],
    ["a file in a missing folder", () => join(tmp, "missing", "c.json"), /the folder .*missing does not exist; create it first/],
  ])("refuses %s with exit 2, no pulse and no temporary file left", (_what, path, message) => {
    const p = path();
    const r = runCli(["measure", "--sim", "--save", p]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(message);
    expect(r.stderr).not.toMatch(/probing|measuring/);
    expect(readdirSync(tmp).filter((f) => f.endsWith(".tmp"))).toEqual([]);
  });
});

describe("measure --csv >> log.csv", () => {
  it("writes the header once, into an empty or new file, and a time column first", () => {
    const log = join(tmp, "log.csv");
    for (let i = 0; i < 2; i++) {
      const r = spawnSync("sh", ["-c", `"${process.execPath}" "${CLI}" measure --sim filter-coil-4m7 --csv >> "${log}"`], { encoding: "utf8", env: { ...process.env, HENRYTICK_CONFIG_DIR: TEST_CONFIG_DIR } });
      expect(r.status, r.stderr).toBe(0);
    }
    const lines = readFileSync(log, "utf8").trimEnd().split("\n");
    expect(lines).toHaveLength(3);
    expect(lines[0].split(",")[0]).toBe("time");
    for (const row of lines.slice(1)) expect(Number.isNaN(Date.parse(row.split(",")[0]))).toBe(false);
    expect(lines.filter((l) => l.startsWith("time,"))).toHaveLength(1);
  });
});

describe("sort", () => {
  it("makes the folders for --log bench/lot7 in a fresh place", () => {
    const base = join(tmp, "fresh", "bench", "lot7");
    const r = runCli(["sort", "--sim", "--nominal", "10u", "--tol", "5%", "--sim-tray", "10u", "--settle", "1", "--log", base, "--json"]);
    expect(r.status, r.stderr).toBe(0);
    expect(existsSync(`${base}.csv`)).toBe(true);
    expect(existsSync(`${base}.jsonl`)).toBe(true);
  });

  it("gives warnings as an array of codes in --json, as measure --json does", () => {
    const r = runCli(["sort", "--sim", "--nominal", "10u", "--tol", "5%", "--sim-tray", "10u,11.5u", "--settle", "1", "--log", join(tmp, "w"), "--json"]);
    expect(r.status, r.stderr).toBe(0);
    for (const p of JSON.parse(r.stdout).parts) expect(Array.isArray(p.warnings)).toBe(true);
    expect(Array.isArray(JSON.parse(runCli(["measure", "--sim", "--json"]).stdout).warnings)).toBe(true);
  });
});

describe("next steps that fit the cause", () => {
  it("a strong fixed drive on a saturating core says to lower the current, not raise it", () => {
    const r = runCli(["measure", "--sim", "powder-toroid-47u", "--drive", "0", "--tank", "2"]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/\[NO_RING\].*a core can saturate.*use a larger drive resistor \(less current\)/);
    expect(r.stderr).not.toMatch(/raise the drive current/);
  });

  it("an uncalibrated self-capacitance below zero reads \"not determined\", not a negative value", () => {
    const r = runCli(["measure", "--sim", "drawer-choke-330u", "--self-cap"]);
    expect(r.status, r.stderr).toBe(0);
    const line = r.stdout.split("\n").find((l) => l.includes("self-cap."))!;
    expect(line).toMatch(/self-cap\.\s+not determined .*calibrate the tanks/);
    expect(line).not.toMatch(/self-cap\.\s+-/);
    const j = JSON.parse(runCli(["measure", "--sim", "drawer-choke-330u", "--self-cap", "--json"]).stdout);
    expect(j.self_capacitance.self_capacitance_determined).toBe(false);
  });
});

describe("wind at the keyboard", () => {
  it("asks again after a typo (3O) and keeps the readings and the model", () => {
    const r = spawnSync(process.execPath, [CLI, "wind", "--sim", "--target", "22u", "--json"], {
      encoding: "utf8", input: "30\n3O\n38\nq\n", env: { ...process.env, HENRYTICK_CONFIG_DIR: TEST_CONFIG_DIR, NO_COLOR: "1" },
    });
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/a turn count is a whole number, got "3O": type the turns now on the coil/);
    const j = JSON.parse(r.stdout);
    expect(j.readings.map((x: { turns: number }) => x.turns)).toEqual([30, 38]);
    expect(j.advice.model.readings).toBe(2);
  });
});

describe("Ctrl-C is a normal finish", () => {
  it("wind --json interrupted prints its readings so far and exits 0", async () => {
    const c = spawn(process.execPath, [CLI, "wind", "--sim", "--target", "22u", "--json"], { env: { ...process.env, HENRYTICK_CONFIG_DIR: TEST_CONFIG_DIR } });
    let out = "";
    c.stdout.on("data", (d) => (out += d));
    c.stdin.write("30\n");
    // Ctrl-C once the first reading is in: --json prints nothing before the end, so wait for the
    // reading's own progress to pass (the simulated reading takes well under a second).
    await new Promise((resolve) => setTimeout(resolve, 2500));
    c.kill("SIGINT");
    const code = await new Promise<number | null>((resolve) => c.on("exit", (k) => resolve(k)));
    expect(code).toBe(0);
    const j = JSON.parse(out);
    expect(j.readings.map((r: { turns: number }) => r.turns)).toEqual([30]);
  });

  // Waiting at the Enter prompt with stdin still open (a terminal, or a pipe nobody closes): the
  // first Ctrl-C must end the wait, not only a reading in progress.
  it("sort --trigger enter interrupted while waiting for Enter prints its summary and exits 0", async () => {
    const log = join(tmp, "enter-lot");
    const c = spawn(process.execPath, [CLI, "sort", "--sim", "--nominal", "330u", "--tol", "5%", "--trigger", "enter", "--log", log], { env: { ...process.env, HENRYTICK_CONFIG_DIR: TEST_CONFIG_DIR } });
    let out = "";
    let err = "";
    c.stdout.on("data", (d) => (out += d));
    c.stderr.on("data", (d) => (err += d));
    c.stdin.write("\n"); // one part measured, then the session waits for the next Enter; stdin stays open
    const recorded = () => existsSync(`${log}.jsonl`) && readFileSync(`${log}.jsonl`, "utf8").trim() !== "";
    for (let i = 0; i < 100 && !recorded(); i++) await new Promise((resolve) => setTimeout(resolve, 100));
    expect(recorded()).toBe(true);
    c.kill("SIGINT");
    const code = await new Promise<number | null>((resolve) => {
      const t = setTimeout(() => { c.kill("SIGKILL"); resolve(null); }, 10_000);
      c.on("exit", (k) => { clearTimeout(t); resolve(k); });
    });
    expect(code).toBe(0);
    expect(out + err).toMatch(/── 1 part/);
  }, 30_000);
});
