// The hostile corpus (hostile/corpus.ts) in npm test: doctored captures that gave a confident wrong
// number, paths that hung or exhausted memory, and calibration profiles that crashed or misled
// measure. Every case must be refused with its code: no number, no crash, no hang. The base
// capture is a real reading of the simulated drawer choke (331.5 µH); the path cases run the built
// CLI (host/dist: build first) in its own process under a time bound.

import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, symlinkSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { writeCaptureFile, type CaptureV1 } from "../../host/src/capture/capture-file.ts";
import { deviceCalibration } from "../../host/src/calibration/device-calibration.ts";
import { saveProfile } from "../../host/src/calibration/profile-store.ts";
import { measurePart } from "../../host/src/measure/measure-part.ts";
import { analyzeCapture } from "../../host/src/measure/read-once.ts";
import { openTester } from "../../host/src/open-tester.ts";
import { CLI } from "../e2e/run-cli.ts";
import { baseProfile, CAPTURE_CASES, outcomeOf, PROFILE_CASES, runEditCase, runPathCase, writeProfileCase } from "./hostile/corpus.ts";

const dir = mkdtempSync(join(tmpdir(), "henrytick-hostile-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
let base: CaptureV1;

beforeAll(async () => {
  const t = await openTester({ scenario: "drawer-choke-330u", seed: 1 });
  try {
    base = (await measurePart(t.client)).capture;
  } finally {
    await t.close();
  }
});

describe("hostile captures: wrong numbers refused with a code", () => {
  it("the base capture itself reads as the part (331.5 µH, simulator truth) with no refusal", () => {
    const a = analyzeCapture(base);
    expect(Math.abs(a.inductance_h - 331.5e-6)).toBeLessThan(a.inductance_u_h * 2);
  });

  it.each(CAPTURE_CASES.filter((c) => c.edit).map((c) => [c.name, c] as const))("%s", (_, c) => {
    const o = runEditCase(c, base, dir);
    expect(o.kind, JSON.stringify(o)).toBe("refused");
    if (o.kind === "refused") {
      expect(c.codes).toContain(o.code);
      expect(o.message).toMatch(/; [a-z]/); // a next step after the finding
    }
  });
});

describe("hostile paths: bounded, refused without reading what is not a capture", () => {
  it.each(CAPTURE_CASES.filter((c) => c.path).map((c) => [c.name, c] as const))("%s", (_, c) => {
    const o = runPathCase(c, dir);
    expect(o.kind, JSON.stringify(o)).toBe("refused");
    if (o.kind === "refused") expect(c.codes).toContain(o.code);
  });

  it("says what the limit is", () => {
    const o = runPathCase(CAPTURE_CASES.find((c) => c.name === "2 million edges")!, dir);
    expect(o.kind === "refused" && o.message).toMatch(/at most \d+ bytes for 65536 edges|at most 65536/);
    const fifo = runPathCase(CAPTURE_CASES.find((c) => c.name === "a FIFO with no writer")!, dir);
    expect(fifo.kind === "refused" && fifo.message).toMatch(/is a pipe \(FIFO\), not a capture file/);
  });
});

describe("large captures", () => {
  it("a capture near the limit (60 000 edges) reads, with a progress line on stderr first", () => {
    // An ideal ring (330 µH on 100 nF, Q 60 000) crossing +35 mV and -5 mV: L is 330 µH by construction.
    const tick = 64e6, C = 1e-7, L = 330e-6, w = 1 / Math.sqrt(L * C), alpha = w / (2 * 60_000), A = 3;
    const edges: [number, number][] = [];
    for (let n = 0, level = 0; edges.length < 60_000; n++, level = 1 - level) {
      const env = A * Math.exp(-alpha * ((n * Math.PI) / w));
      const base = (Math.floor(n / 2) * 2 * Math.PI) / w;
      const tc = level === 0 ? base + Math.asin(0.035 / env) / w : base + (Math.PI + Math.asin(0.005 / env)) / w;
      edges.push([Math.floor(tc * tick), level === 0 ? 1 : 0]);
    }
    const f = join(dir, "large.json");
    writeCaptureFile(f, { format: "henrytick-capture", version: 1, tick_hz: tick, tank_c_f: C, thresholds_v: [0.035, -0.005], edges });
    const r = spawnSync(process.execPath, [CLI, "analyze", f, "--json"], { encoding: "utf8", timeout: 120_000 });
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/^analysing .*large\.json: 60000 edges/);
    expect(Math.abs(JSON.parse(r.stdout).inductance_h / L - 1)).toBeLessThan(1e-3);
  });
});

describe("hostile calibration profiles: checked against the tester's board", () => {
  it.each(PROFILE_CASES.map((c) => [c.name, c] as const))("%s", async (_, c) => {
    const t = await openTester({ scenario: "drawer-choke-330u", seed: 1 });
    try {
      const store = join(dir, `profile-${c.name.replace(/[^A-Za-z0-9]+/g, "-")}`);
      writeProfileCase(c, t.client.identity.device_id, store);
      let o;
      try {
        deviceCalibration(t.client, { dir: store });
        o = { kind: "accepted" };
      } catch (e) {
        o = outcomeOf(e);
      }
      expect(o.kind, JSON.stringify(o)).toBe("refused");
      if (o.kind === "refused") expect(c.codes).toContain((o as { code: string }).code);
      // saveProfile never writes one either.
      if (c.codes.includes("PROFILE_INVALID")) expect(() => saveProfile(c.edit(baseProfile(t.client.identity.device_id)), { dir: store })).toThrow(expect.objectContaining({ code: "PROFILE_INVALID" }));
    } finally {
      await t.close();
    }
  });

  it("the base profile is accepted and applied", async () => {
    const t = await openTester({ scenario: "drawer-choke-330u", seed: 1 });
    try {
      const store = join(dir, "profile-base");
      writeProfileCase({ name: "base", edit: (p) => p, codes: [] }, t.client.identity.device_id, store);
      expect(deviceCalibration(t.client, { dir: store }).applied?.tanks?.[2]?.c_f).toBe(101e-9);
    } finally {
      await t.close();
    }
  });

  it.each([
    ["a FIFO with no writer", (f: string) => spawnSync("mkfifo", [f]).status === 0],
    ["a symlink to /dev/zero", (f: string) => { symlinkSync("/dev/zero", f); return true; }],
  ])("a profile that is %s is PROFILE_UNREADABLE at once, never read (measure in its own process)", (_, plant) => {
    const probe = spawnSync(process.execPath, [CLI, "profile", "--sim", "--json"], { encoding: "utf8" });
    const id = JSON.parse(probe.stdout).identity.device_id;
    const store = mkdtempSync(join(dir, "planted-"));
    expect(plant(join(store, `calibration-${id}.json`))).toBe(true);
    const r = spawnSync(process.execPath, ["--max-old-space-size=512", CLI, "measure", "--sim", "--config-dir", store], { encoding: "utf8", timeout: 60_000 });
    expect(r.status, r.stderr).toBe(1);
    expect(r.stderr).toMatch(/\[PROFILE_UNREADABLE\] cannot read .*: it is a (pipe \(FIFO\)|device), not a profile file/);
  });

  it("measure with a tank index of 1e8 in the profile ends at once with PROFILE_INVALID, exit 1", () => {
    const store = join(dir, "cli-profile");
    const probe = spawnSync(process.execPath, [CLI, "profile", "--sim", "--json"], { encoding: "utf8" });
    const id = JSON.parse(probe.stdout).identity.device_id;
    writeProfileCase(PROFILE_CASES[0], id, store);
    const r = spawnSync(process.execPath, ["--max-old-space-size=512", CLI, "measure", "--sim", "--config-dir", store], { encoding: "utf8", timeout: 60_000 });
    expect(r.status, r.stderr).toBe(1);
    expect(r.stderr).toMatch(/\[PROFILE_INVALID\] .*tanks\[0\]\.index": 100000000 is not a tank index \(0 to 255\)/);
  });
});
