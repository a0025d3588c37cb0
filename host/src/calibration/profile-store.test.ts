// Profile schema and storage: named-field refusals, atomic replacement with the previous profile
// kept, and damaged, partial or future-version files refused without losing the good one.
// Every test uses its own temporary directory, never the user's config directory.

import { existsSync, mkdtempSync, readFileSync, readdirSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import type { CalibrationProfile } from "./profile-schema.ts";
import { emptyProfile, validateProfile } from "./profile-schema.ts";
import { configDir, loadProfile, profilePaths, restorePreviousProfile, saveProfile } from "./profile-store.ts";

const ID = "5eed0001";
const T0 = new Date("2026-01-02T03:04:05Z");

function sample(c0 = 1.02e-9): CalibrationProfile {
  const p = emptyProfile(ID, T0);
  p.tanks.push({ index: 0, nominal_f: 1e-9, c_f: c0, u_f: 2e-12, shared_u_rel: 5e-4, timebase_ppm: 0, method: "reference-inductor", time: T0.toISOString(), detail: "test" });
  p.timebase = { ppm: 11, u_ppm: 1.5, method: "entered", time: T0.toISOString(), detail: "counter" };
  return p;
}

const tmp = () => mkdtempSync(join(tmpdir(), "henrytick-cal-"));

describe("profile schema", () => {
  it("accepts a well-formed profile", () => {
    expect(validateProfile(JSON.parse(JSON.stringify(sample()))).tanks[0].c_f).toBe(1.02e-9);
  });

  it.each([
    [(p: any) => (p.tanks[0].c_f = -1e-9), /"tanks\[0\]\.c_f"/],
    [(p: any) => (p.tanks[0].c_f = 5e-9), /"tanks\[0\]\.c_f".*factor 2/],
    [(p: any) => delete p.tanks[0].u_f, /"tanks\[0\]\.u_f"/],
    [(p: any) => (p.tanks[0].time = "yesterday"), /"tanks\[0\]\.time"/],
    [(p: any) => (p.timebase.ppm = 5000), /"timebase\.ppm"/],
    [(p: any) => (p.format = "other"), /"format"/],
    [(p: any) => (p.tanks = {}), /"tanks"/],
    [(p: any) => p.tanks.push({ ...p.tanks[0] }), /"tanks\[1\]\.index".*twice/],
  ])("names the bad field (%#)", (spoil, message) => {
    const p = JSON.parse(JSON.stringify(sample()));
    spoil(p);
    expect(() => validateProfile(p)).toThrow(message);
    expect(() => validateProfile(p)).toThrow(expect.objectContaining({ code: "PROFILE_INVALID" }));
  });

  it("refuses a future version with its own code and the version named", () => {
    const p = { ...JSON.parse(JSON.stringify(sample())), version: 2 };
    expect(() => validateProfile(p)).toThrow(expect.objectContaining({ code: "PROFILE_VERSION" }));
    expect(() => validateProfile(p)).toThrow(/"version": 2.*update henrytick/);
  });
});

describe("profile storage", () => {
  it("resolves the directory: option, then HENRYTICK_CONFIG_DIR, then XDG_CONFIG_HOME, then ~/.config", () => {
    expect(configDir({ dir: "/x" })).toBe("/x");
    expect(configDir({ env: { HENRYTICK_CONFIG_DIR: "/a", XDG_CONFIG_HOME: "/b" } })).toBe("/a");
    expect(configDir({ env: { XDG_CONFIG_HOME: "/b" } })).toBe(join("/b", "henrytick"));
    expect(configDir({ env: { XDG_CONFIG_HOME: "relative", HOME: "/home/u" } })).toBe(join("/home/u", ".config", "henrytick"));
  });

  it("writes atomically and keeps the previous profile", () => {
    const dir = tmp();
    saveProfile(sample(1.01e-9), { dir });
    expect(loadProfile(ID, { dir })!.tanks[0].c_f).toBe(1.01e-9);
    const r = saveProfile(sample(1.02e-9), { dir });
    expect(r.previous_kept).toBe(true);
    expect(loadProfile(ID, { dir })!.tanks[0].c_f).toBe(1.02e-9);
    const prev = JSON.parse(readFileSync(profilePaths(ID, { dir }).previous, "utf8"));
    expect(prev.tanks[0].c_f).toBe(1.01e-9);
    expect(readdirSync(dir).filter((f) => f.endsWith(".tmp"))).toEqual([]);
    // Restore swaps them, so a restore can itself be undone.
    expect(restorePreviousProfile(ID, { dir }).tanks[0].c_f).toBe(1.01e-9);
    expect(loadProfile(ID, { dir })!.tanks[0].c_f).toBe(1.01e-9);
  });

  it("never writes a profile it would refuse to read", () => {
    const dir = tmp();
    const bad = sample();
    bad.tanks[0].u_f = -1;
    expect(() => saveProfile(bad, { dir })).toThrow(/"tanks\[0\]\.u_f"/);
    expect(existsSync(profilePaths(ID, { dir }).current)).toBe(false);
  });

  it.each([
    ["partial (cut short)", (t: string) => t.slice(0, t.length / 2), "PROFILE_UNREADABLE"],
    ["corrupt (bad value)", (t: string) => t.replace('"c_f": 1.02e-9', '"c_f": "lots"'), "PROFILE_INVALID"],
    ["future version", (t: string) => t.replace('"version": 1', '"version": 7'), "PROFILE_VERSION"],
  ])("a %s current file is refused; the previous survives and a new save does not overwrite it", (_name, spoil, code) => {
    const dir = tmp();
    saveProfile(sample(1.01e-9), { dir });
    saveProfile(sample(1.02e-9), { dir });
    const paths = profilePaths(ID, { dir });
    writeFileSync(paths.current, spoil(readFileSync(paths.current, "utf8")));
    expect(() => loadProfile(ID, { dir })).toThrow(expect.objectContaining({ code }));
    // Saving over a bad current sets it aside; the good previous is untouched.
    saveProfile(sample(1.03e-9), { dir });
    expect(JSON.parse(readFileSync(paths.previous, "utf8")).tanks[0].c_f).toBe(1.01e-9);
    expect(existsSync(paths.rejected)).toBe(true);
    expect(loadProfile(ID, { dir })!.tanks[0].c_f).toBe(1.03e-9);
  });

  it("restore brings the previous back when the current is damaged", () => {
    const dir = tmp();
    saveProfile(sample(1.01e-9), { dir });
    saveProfile(sample(1.02e-9), { dir });
    writeFileSync(profilePaths(ID, { dir }).current, "{");
    expect(restorePreviousProfile(ID, { dir }).tanks[0].c_f).toBe(1.01e-9);
    expect(loadProfile(ID, { dir })!.tanks[0].c_f).toBe(1.01e-9);
  });

  it("says when there is nothing to restore, and returns null for a tester never calibrated", () => {
    const dir = tmp();
    expect(loadProfile(ID, { dir })).toBeNull();
    expect(() => restorePreviousProfile(ID, { dir })).toThrow(expect.objectContaining({ code: "NO_PREVIOUS" }));
  });
});
