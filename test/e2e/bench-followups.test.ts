// Bench sessions through the built CLI, second round: turn changes in a --turns list, a target
// the former cannot reach, a tolerance letter never dropped, sort logs with decimal limits and
// warnings as an array, Ctrl-C a normal finish under npx as under node.

import { spawn } from "node:child_process";
import { mkdtempSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import { CLI, runCli, TEST_CONFIG_DIR } from "./run-cli.ts";

const tmp = mkdtempSync(join(tmpdir(), "henrytick-followups-"));

describe("wind --turns", () => {
  it("reads +N and -N in the list as changes from the entry before, as at the keyboard", () => {
    const r = runCli(["wind", "--sim", "--target", "22u", "--turns", "30,+1,-3", "--json"]);
    expect(r.status, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).readings.map((x: { turns: number }) => x.turns)).toEqual([30, 31, 28]);
  });

  it("refuses a list that starts with a change, before any pulse, showing how to write it", () => {
    const r = runCli(["wind", "--sim", "--target", "22u", "--turns", "+1,30"]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/--turns starts with the turns on the coil.*write 30,\+1/);
    expect(r.stderr).not.toMatch(/measuring/);
  });
});

describe("wind toward a target out of reach", () => {
  it("refuses a target beyond the simulated former up front, with the former's reach", () => {
    const r = runCli(["wind", "--sim", "--target", "300u", "--turns", "30"]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/--target 300u: 300 µH is more than the simulated former reaches, [\d.]+ nH \(\d+ turns\) to 23\d µH \(\d+ turns\)/);
    expect(r.stderr).not.toMatch(/measuring/);
  });

  it("says when the advice is a far extrapolation, and to wind part of the way first", () => {
    const r = runCli(["wind", "--sim", "--target", "200u", "--turns", "30"]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/the target needs about \d+ ± \d+ turns, [\d.]+× beyond the counts measured \(30\).*wind to about \d+ turns and measure again/);
  });
});

describe("a tolerance letter on the nominal is never dropped (letters: common trade practice, no source)", () => {
  it("refuses --nominal \"10uH F\" with --tol 5%, showing both ways to write it", () => {
    const r = runCli(["sort", "--sim", "--nominal", "10uH F", "--tol", "5%", "--count", "1", "--log", join(tmp, "conflict")]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/tolerance letter F \(±1 %\) but --tol says ±5 %: give the tolerance once, either --nominal "10uH" --tol 5% or --nominal "10uH F" without --tol/);
  });

  it("takes the letter alone, and a letter with an agreeing --tol", () => {
    const alone = runCli(["sort", "--sim", "--nominal", "10uH F", "--sim-tray", "10u", "--settle", "1", "--log", join(tmp, "alone"), "--json"]);
    expect(alone.status, alone.stderr).toBe(0);
    expect(JSON.parse(alone.stdout).summary.limits).toEqual({ lower: 9.9e-6, upper: 10.1e-6 });
    const both = runCli(["sort", "--sim", "--nominal", "4u7J", "--tol", "5%", "--sim-tray", "4.7u", "--settle", "1", "--log", join(tmp, "both"), "--json"]);
    expect(both.status, both.stderr).toBe(0);
  });

  it("refuses a wind --target letter that --tol contradicts", () => {
    const r = runCli(["wind", "--sim", "--target", "22uH G", "--tol", "5%", "--turns", "30"]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/--target "22uH G" ends in the tolerance letter G \(±2 %\)/);
  });
});

describe("sort logs", () => {
  it("write the limits as the decimals they are and the warnings as an array of codes", () => {
    const base = join(tmp, "lot");
    const r = runCli(["sort", "--sim", "--nominal", "10u", "--tol", "5%", "--sim-tray", "10u,11.5u", "--settle", "1", "--log", base, "--json"]);
    expect(r.status, r.stderr).toBe(0);
    const text = readFileSync(`${base}.jsonl`, "utf8");
    expect(text).toContain('"lower_h":0.0000095,"upper_h":0.0000105');
    const records = text.trimEnd().split("\n").map((l) => JSON.parse(l));
    expect(records).toHaveLength(2);
    for (const rec of records) expect(Array.isArray(rec.warnings)).toBe(true);
    const csv = readFileSync(`${base}.csv`, "utf8").trimEnd().split("\n");
    for (const row of csv.slice(1)) expect(row).toContain(",0.0000095,0.0000105,");
  });
});

const ROOT = fileURLToPath(new URL("../..", import.meta.url));

/**
 * Starts a command in its own process group, waits until stdout has shown `ready`, then sends
 * SIGINT to the whole group, as a terminal does for Ctrl-C (npx, its shell and henrytick alike).
 */
async function ctrlC(how: "node" | "npx", args: string[], ready: RegExp): Promise<{ code: number | null; signal: NodeJS.Signals | null; out: string; err: string }> {
  const env = { ...process.env, HENRYTICK_CONFIG_DIR: TEST_CONFIG_DIR, NO_COLOR: "1", npm_config_offline: "true", npm_config_update_notifier: "false" };
  const c = how === "npx"
    ? spawn("npx", ["henrytick", ...args], { cwd: ROOT, env, detached: true })
    : spawn(process.execPath, [CLI, ...args], { cwd: ROOT, env, detached: true });
  let out = "";
  let err = "";
  c.stdout.on("data", (d) => (out += d));
  c.stderr.on("data", (d) => (err += d));
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) => c.on("exit", (code, signal) => resolve({ code, signal })));
  for (let i = 0; i < 300 && !ready.test(out); i++) await new Promise((resolve) => setTimeout(resolve, 100));
  expect(out, err).toMatch(ready);
  process.kill(-c.pid!, "SIGINT");
  const killer = setTimeout(() => process.kill(-c.pid!, "SIGKILL"), 20_000);
  const end = await exited;
  clearTimeout(killer);
  return { ...end, out, err };
}

describe("Ctrl-C ends a watch normally, under npx as under node", () => {
  for (const how of ["node", "npx"] as const) {
    it(`measure --watch under ${how}: status 0, the readings so far printed`, async () => {
      const r = await ctrlC(how, ["measure", "--sim", "--watch", "--interval-ms", "100"], /#2 /);
      expect({ code: r.code, signal: r.signal }, r.err).toEqual({ code: 0, signal: null });
      expect(r.out).toMatch(/#1 .*µH/);
    }, 60_000);
  }

  it("wind --csv under npx: status 0 and the readings so far", async () => {
    const r = await ctrlC("npx", ["wind", "--sim", "--target", "22u", "--turns", "30,31,32,33,34,35,36,37,38,39,40,41,42,43,44,45,46,47,48,49,50,51,52,53,54,55,56,57,58,59,60", "--csv"], /^32,/m);
    expect({ code: r.code, signal: r.signal }, r.err).toEqual({ code: 0, signal: null });
  }, 60_000);

  it("sort under npx: status 0 and the summary", async () => {
    const r = await ctrlC("npx", ["sort", "--sim", "--nominal", "330u", "--tol", "5%", "--count", "1000", "--log", join(tmp, "npx-lot")], /# {2}2 /);
    expect({ code: r.code, signal: r.signal }, r.err).toEqual({ code: 0, signal: null });
    expect(r.out).toMatch(/── \d+ parts/);
  }, 60_000);
});

/** Decimals of a printed number. */
const decimals = (s: string) => (s.split(".")[1] ?? "").length;
/** Significant digits of a printed uncertainty (leading zeros do not count). */
const sigDigits = (s: string) => s.replace(".", "").replace(/^0+/, "").length;

// JCGM 100:2008 §7.2.6: U to at most two significant digits, the value to the same decimal place.
describe("digits follow the uncertainty in text output", () => {
  it("measure prints the frequency with its U, to the same decimal place", () => {
    const text = runCli(["measure", "--sim"]);
    expect(text.status, text.stderr).toBe(0);
    const m = /frequency {4}([\d.]+) kHz {2}± ([\d.]+) kHz/.exec(text.stdout);
    expect(m, text.stdout).not.toBeNull();
    const [, value, u] = m!;
    expect(sigDigits(u)).toBe(2);
    expect(decimals(value)).toBe(decimals(u));
    const json = JSON.parse(runCli(["measure", "--sim", "--json"]).stdout);
    expect(Number(value)).toBeCloseTo(json.f0_hz / 1e3, decimals(value));
    expect(Number(u)).toBeCloseTo(json.f0_u_hz / 1e3, decimals(u));
  });

  it("sort's summary gives the mean and range to the digits of the parts' U", () => {
    const r = runCli(["sort", "--sim", "--nominal", "10u", "--tol", "5%", "--sim-tray", "9.61u,10.02u,10.43u", "--settle", "1", "--log", join(tmp, "digits")]);
    expect(r.status, r.stderr).toBe(0);
    const m = /mean {9}([\d.]+) µH, range ([\d.]+) µH … ([\d.]+) µH \(parts read with U up to ([\d.]+) µH\)/.exec(r.stdout);
    expect(m, r.stdout).not.toBeNull();
    const u = m![4];
    expect(sigDigits(u)).toBe(2);
    for (const v of m!.slice(1, 4)) expect(decimals(v)).toBe(decimals(u));
  });
});

describe("nothing rings under a very low ring-peak limit", () => {
  it("says the limit cut the probes, not that the clips may be open, and how the limit acts", () => {
    const r = runCli(["measure", "--sim", "--max-peak-v", "0.3"]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/\[NO_RING\] nothing rang within the 0\.3 V ring-peak limit: .*probe settings were cut to at most \d+ µs of charge, shorter than at the tester.s default limit \(the longest safe charge grows with the square of the limit\)/);
    expect(r.stderr).toMatch(/Raise the ring-peak limit \(--max-peak-v\)/);
    expect(r.stderr).not.toMatch(/clips may be open/);
    // The same part at the default limit rings: the limit was the cause.
    expect(runCli(["measure", "--sim"]).status).toBe(0);
  });
});

describe("a fixed setting the advice refused", () => {
  it("says the advice's reason and its first choice, not that the part may be disconnected", () => {
    // advise refuses 10 kΩ with 1 µF for the 1.2 µH loop: its ring would barely clear the thresholds.
    const advise = runCli(["advise", "--sim", "loop-antenna-1u2"]);
    expect(advise.stdout).toMatch(/10\.0 kΩ with 1\.00 µF: refused, too few edges would clear the comparator thresholds/);
    const r = runCli(["measure", "--sim", "loop-antenna-1u2", "--drive", "3", "--tank", "3"]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/\[EMPTY_CAPTURE\] no usable ring on drive 10\.0 kΩ, tank 1\.00 µF, charge \d+ µs, as the advice predicted for this part: too few edges would clear the comparator thresholds/);
    expect(r.stderr).toMatch(/The part and its connection are not the cause; drive \d \(.*\) with tank \d \(.*\) is the advice's first choice, or leave the setting to automatic ranging \(no --drive or --tank\)/);
    expect(r.stderr).not.toMatch(/check that the part is connected/);
  });
});
