// Safety at the bench: a transformer's other winding kept under the limit by a turns ratio, the
// caution every pulsing command prints, and where each voltage limit comes from. Through the
// library and through the built CLI on the simulated tester.

import { mkdtempSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { measurePart, openTester } from "../../host/src/index.ts";
import type { SettingPrediction } from "../../host/src/ranging/predict.ts";
import { loadScenario } from "../../host/src/sim/scenario.ts";
import { runCli } from "./run-cli.ts";

// 230 V : 12 V doorbell transformer pulsed on its 12 V winding: the mains winding has about
// 19 times the turns (turns ratio = voltage ratio, standard transformer theory).
const RATIO = 230 / 12;

describe("turns ratio caps ranging (library)", () => {
  it("keeps every planned pulse and the reading's ring under limit / ratio, so the other winding stays under 28.8 V", async () => {
    const t = await openTester({ scenario: "doorbell-transformer-12v" });
    const planned: SettingPrediction[] = [];
    try {
      const r = await measurePart(t.client, { other_winding_ratio: RATIO, onBeforePulse: (p) => planned.push(p) });
      expect(planned.length).toBeGreaterThan(0);
      for (const p of planned) expect(p.a0_v * RATIO).toBeLessThanOrEqual(28.8);
      expect(r.analysis.amplitude_v * RATIO).toBeLessThanOrEqual(28.8);
      // Still a good reading of the winding (scenario truth).
      expect(Math.abs(r.analysis.inductance_h / loadScenario("doorbell-transformer-12v").part.inductance_h - 1)).toBeLessThan(0.02);
    } finally {
      await t.close();
    }
  });

  it("without a ratio the same part is rung far higher (what the cap prevents)", async () => {
    const t = await openTester({ scenario: "doorbell-transformer-12v" });
    try {
      const r = await measurePart(t.client);
      expect(r.analysis.amplitude_v * RATIO).toBeGreaterThan(42.4);
    } finally {
      await t.close();
    }
  });
});

describe("turns ratio and cautions (CLI)", () => {
  it("measure --winding-ratio 230:12 keeps the mains side under the limit and says what it saw", () => {
    const r = runCli(["measure", "--sim", "doorbell-transformer-12v", "--winding-ratio", "230:12"]);
    expect(r.status, r.stderr).toBe(0);
    const amp = Number(/ring\s+([\d.]+) V initial/.exec(r.stdout)?.[1]);
    expect(amp * RATIO).toBeLessThanOrEqual(28.8);
    expect(r.stderr).toMatch(/other winding saw about [\d.]+ V/);
    expect(r.stderr.match(/caution/gi)).toHaveLength(1);
  });

  it.each([
    ["measure", ["measure", "--sim", "doorbell-transformer-12v"]],
    ["measure --json", ["measure", "--sim", "doorbell-transformer-12v", "--json"]],
    ["advise", ["advise", "--sim", "doorbell-transformer-12v"]],
    ["measure --watch", ["measure", "--sim", "doorbell-transformer-12v", "--watch", "--count", "2", "--interval-ms", "0"]],
  ])("%s on a transformer winding gives the strong caution once, naming --winding-ratio", (_what, args) => {
    const r = runCli(args);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr.match(/CAUTION: this part looks like a transformer winding/g)).toHaveLength(1);
    expect(r.stderr).toMatch(/--winding-ratio/);
    expect(r.stderr).toMatch(/licensed practice/);
  });

  it.each([
    ["measure", ["measure", "--sim", "drawer-choke-330u"]],
    ["advise", ["advise", "--sim", "drawer-choke-330u"]],
    ["measure --watch", ["measure", "--sim", "drawer-choke-330u", "--watch", "--count", "3", "--interval-ms", "0"]],
    ["sort", ["sort", "--sim", "--nominal", "330u", "--tol", "10%", "--sim-tray", "330u", "--log", "/tmp/henrytick-safety-sort"]],
    ["wind", ["wind", "--sim", "--target", "22u", "--turns", "30"]],
    ["calibrate thresholds", ["calibrate", "thresholds", "--sim", "--config-dir", "/tmp/henrytick-safety-cal"]],
  ])("%s on an ordinary part prints one short caution", (_what, args) => {
    const r = runCli(args);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr.match(/caution: (the part is|every part is) pulsed/g)).toHaveLength(1);
    expect(r.stderr).not.toMatch(/CAUTION: this part looks like a transformer/);
  });

  it("a pulse predicted to ring high escalates to the strong caution once", () => {
    const r = runCli(["measure", "--sim", "filter-coil-4m7"]);
    expect(r.status).toBe(0);
    expect(r.stderr.match(/CAUTION: the next pulse is predicted to ring at about 1\d(\.\d)? V/g)).toHaveLength(1);
  });

  it("advise says where each voltage limit comes from and that --hazardous-ok cannot take effect on a 36 V clamp", () => {
    const r = runCli(["advise", "--sim", "doorbell-transformer-12v"]);
    expect(r.stdout).toMatch(/28\.8 V = 80 % of this tester's 36 V flyback clamp/);
    expect(r.stdout).toMatch(/20\.2 V: 70 % of the limit/);
    expect(r.stdout).toMatch(/--hazardous-ok cannot take effect on this tester: its 36 V clamp is below 42\.4 V/);
    const j = JSON.parse(runCli(["advise", "--sim", "doorbell-transformer-12v", "--json", "--winding-ratio", "19"]).stdout);
    expect(j.limit.limit_v).toBeCloseTo(28.8 / 19, 9);
    expect(j.limit.winding_limit_v).toBe(28.8);
    // Every setting the advice allows keeps the other winding under the limit.
    for (const a of j.advice.filter((x: { refused: string }) => x.refused === "")) expect(a.a0_v * 19).toBeLessThanOrEqual(28.8 * 1.0001);
    expect(j.advice.some((x: { refused: string }) => /for the other winding/.test(x.refused))).toBe(true);
  });

  it("help and the safety text explain the turns ratio, the 28.8 V figure and the clamp", () => {
    const r = runCli(["--help"]);
    expect(r.stdout).toMatch(/--winding-ratio N/);
    expect(r.stdout).toMatch(/28\.8 V/);
    expect(r.stdout).toMatch(/cannot take effect/);
  });

  it.each(["0", "-3", "abc", "19:0", "1e9"])("refuses --winding-ratio %s with a hint", (bad) => {
    const r = runCli(["measure", "--sim", `--winding-ratio=${bad}`]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/--winding-ratio .*e\.g\. 19 or 230:12/);
  });

  // Naming the transformer from the pulsed side (12:230) read as a step-down would lift the cap
  // and ring the 12 V side to 11 V: about 210 V on the mains side. No pulse before it is refused.
  it.each(["12:230", "12/230", "1:19"])("refuses --winding-ratio %s written pulsed side first, before any pulse", (reversed) => {
    const r = runCli(["measure", "--sim", "doorbell-transformer-12v", "--winding-ratio", reversed]);
    expect(r.status).toBe(2);
    expect(r.stdout).toBe("");
    expect(r.stderr).toMatch(/other winding first.*230:12/);
    expect(r.stderr).not.toMatch(/step \d|pulse \d/);
  });

  it("takes a step-down ratio given as a plain number", () => {
    const r = runCli(["advise", "--sim", "doorbell-transformer-12v", "--winding-ratio", "0.05", "--json"]);
    expect(r.status).toBe(0);
  });
});

describe("the safety text's figures", () => {
  it("match the limits ranging applies", async () => {
    const { SAFETY_TEXT } = await import("../../host/src/cli/safety.ts");
    const { DEFAULT_MAX_PEAK_V, HAZARDOUS_PEAK_V, CLAMP_SHARE } = await import("../../host/src/ranging/safety.ts");
    expect(SAFETY_TEXT).toContain(`${DEFAULT_MAX_PEAK_V} V peak`);
    expect(SAFETY_TEXT).toContain(`${HAZARDOUS_PEAK_V} V peak`);
    expect(SAFETY_TEXT).toContain(`${Number((CLAMP_SHARE * 36).toFixed(2))} V: ${CLAMP_SHARE * 100} % of its 36 V clamp`);
  });
});

describe("a setting the tester does not have", () => {
  it.each([["--drive", "9", "--tank", "0"], ["--drive", "0", "--tank", "7"]])("measure %s %s %s %s is a usage error (status 2) naming the tester's range, before any pulse", (...args) => {
    const r = runCli(["measure", "--sim", ...args]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/this tester has (drives|tanks) 0 to 3/);
    expect(r.stderr).not.toMatch(/internal error/);
  });
});

describe("calibration procedures pulse like measure does", () => {
  // The reference calibration rings a 330 µH part on the 1 nF tank to about 25 V: the strong
  // caution must come before that pulse, as it does for measure.
  it("calibrate reference gives the strong caution before a pulse predicted to ring 10 V or more", () => {
    const dir = mkdtempSync(join(tmpdir(), "henrytick-cal-caution-"));
    const r = runCli(["calibrate", "reference", "--sim", "--ref-h", "330u", "--ref-u-h", "0.1u", "--config-dir", dir]);
    expect(r.status).toBe(0);
    expect(r.stderr).toMatch(/CAUTION: the next pulse is predicted to ring at about \d+(\.\d+)? V peak/);
    expect(r.stderr.match(/CAUTION: the next pulse/g)).toHaveLength(1);
  });
});
