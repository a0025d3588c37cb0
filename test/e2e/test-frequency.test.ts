// Test frequency of the user's choice: ranging takes the tank whose ring is nearest the asked
// frequency (log distance), and the reading says how near it came. The expected tanks follow
// from f = 1 / (2π √(LC)) with the simulated parts' inductances and the reference board's
// nominal tanks (1 nF, 10 nF, 100 nF, 1 µF); the parts' values are the scenarios' own.

import { mkdtempSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { measurePart, openTester } from "../../host/src/index.ts";
import type { MeasureOptions } from "../../host/src/index.ts";
import { SettingHold } from "../../host/src/workflows/setting-hold.ts";
import { assessStability, SettingHistory } from "../../host/src/workflows/watch-trend.ts";
import { runSort } from "../../host/src/workflows/sort-runner.ts";
import { SortSession } from "../../host/src/workflows/sort-session.ts";
import { parseTolerance } from "../../host/src/values/tolerance.ts";
import type { MeasureEvent } from "../../host/src/index.ts";
import { runCli } from "./run-cli.ts";

const tmp = mkdtempSync(join(tmpdir(), "henrytick-freq-"));

async function read(scenario: string, opts: MeasureOptions) {
  const t = await openTester({ scenario });
  try {
    return await measurePart(t.client, opts);
  } finally {
    await t.close();
  }
}

/** Ring frequency of `l_h` on `c_f`, Hz (LC resonance). */
const ringHz = (l_h: number, c_f: number) => 1 / (2 * Math.PI * Math.sqrt(l_h * c_f));
const TANKS_F = [1e-9, 10e-9, 100e-9, 1e-6];
/** The tank index whose ring is nearest `asked_hz` on a log scale, worked out here independently of the ranging code. */
function nearestTank(l_h: number, asked_hz: number): number {
  const d = TANKS_F.map((c) => Math.abs(Math.log10(ringHz(l_h, c) / asked_hz)));
  return d.indexOf(Math.min(...d));
}

describe("measurePart with test_frequency_hz", () => {
  it.each([
    { scenario: "drawer-choke-330u", l_h: 330e-6, asked_hz: 10e3 },
    { scenario: "drawer-choke-330u", l_h: 330e-6, asked_hz: 30e3 },
    { scenario: "drawer-choke-330u", l_h: 330e-6, asked_hz: 100e3 },
    { scenario: "filter-coil-4m7", l_h: 4.7e-3, asked_hz: 10e3 },
    { scenario: "filter-coil-4m7", l_h: 4.7e-3, asked_hz: 2e3 },
  ])("$scenario asked $asked_hz Hz rings on the nearest tank and says how near", async ({ scenario, l_h, asked_hz }) => {
    const r = await read(scenario, { test_frequency_hz: asked_hz });
    const tank = nearestTank(l_h, asked_hz);
    expect(r.settings.tank).toBe(tank);
    const choice = r.test_frequency!;
    expect(choice).toMatchObject({ asked_hz, tank_index: tank, nearest: true, nearer_tanks: [] });
    expect(choice.rang_hz).toBe(r.analysis.f0_hz);
    expect(choice.deviation_rel).toBeCloseTo(r.analysis.f0_hz / asked_hz - 1, 12);
    // The ring is where LC resonance puts it on that tank (within the part's self-capacitance and the tank's 1 % tolerance).
    expect(Math.abs(r.analysis.f0_hz / ringHz(l_h, TANKS_F[tank]) - 1)).toBeLessThan(0.03);
    expect(choice.note).toMatch(/^asked .*Hz, rang at .*Hz \(.*\): the nearest of this tester's tanks/);
  });

  it("the same asked frequency lands on different tanks for the two parts", async () => {
    const a = await read("drawer-choke-330u", { test_frequency_hz: 10e3 });
    const b = await read("filter-coil-4m7", { test_frequency_hz: 10e3 });
    expect([a.settings.tank, b.settings.tank]).toEqual([3, 2]);
  });

  it("names the nearer tanks it could not use and why (a 1.2 µH loop asked 2 MHz)", async () => {
    const r = await read("loop-antenna-1u2", { test_frequency_hz: 2e6 });
    const choice = r.test_frequency!;
    expect(choice.nearest).toBe(false);
    expect(choice.nearer_tanks.map((n) => n.tank_index)).toEqual([0, 1]);
    for (const n of choice.nearer_tanks) expect(n.why).toMatch(/^refused: /);
    expect(choice.note).toMatch(/the 1\.00 nF tank would ring nearer .* but refused: the ring is too fast for the timer/);
  });

  it("names a nearer tank refused for the voltage limit (an 82 mH valve coil asked 10 kHz under a 1 V limit)", async () => {
    const r = await read("solenoid-valve-82m", { test_frequency_hz: 10e3, max_peak_v: 1 });
    const choice = r.test_frequency!;
    expect(choice.nearest).toBe(false);
    // 82 mH rings at about 17.6 kHz on 1 nF and 5.6 kHz on 10 nF (LC resonance): both nearer 10 kHz than 1.76 kHz on 100 nF.
    expect(choice.nearer_tanks.map((n) => n.tank_index)).toEqual([0, 1]);
    expect(choice.nearer_tanks[0].why).toMatch(/^refused: its ring could reach .* V, above the 1 V limit/);
    expect(r.analysis.amplitude_v).toBeLessThanOrEqual(1);
  });

  it("reaches the nearest tank once the first reading allows it, though the probe alone kept it out (4.7 mH, 0.7 V limit)", async () => {
    // Until the first full reading, predictions keep 70 % of the limit: the 100 nF tank (7.3 kHz,
    // nearest 10 kHz) is refused then, and allowed by the refined estimate after the 10 nF reading.
    const r = await read("filter-coil-4m7", { test_frequency_hz: 10e3, max_peak_v: 0.7 });
    expect(r.settings.tank).toBe(nearestTank(4.7e-3, 10e3));
    expect(r.test_frequency).toMatchObject({ nearest: true, nearer_tanks: [] });
  });

  it("says a nearer tank was tried and why its reading was not kept (4.4 µH, 0.8 V limit)", async () => {
    const r = await read("tank-coil-4u4", { test_frequency_hz: 10e3, max_peak_v: 0.8 });
    const choice = r.test_frequency!;
    expect(r.settings.tank).toBe(2);
    expect(choice.nearer_tanks).toHaveLength(1);
    expect(choice.nearer_tanks[0]).toMatchObject({ tank_index: 3 });
    expect(choice.nearer_tanks[0].why).toMatch(/^gave only \d+ edges \(20 wanted\)$/);
  });

  it("moves to the next-nearest tank when the nearest one's ring changes with its amplitude (saturating 47 µH toroid)", async () => {
    // 47 µH rings at about 23 kHz on 1 µF (nearest 10 kHz) and 73 kHz on 100 nF (LC resonance);
    // on 1 µF every allowed drive saturates the core, so the nearest usable ring is on 100 nF.
    const r = await read("powder-toroid-47u", { test_frequency_hz: 10e3 });
    const choice = r.test_frequency!;
    expect(r.settings.tank).toBe(2);
    expect(choice.nearer_tanks).toEqual([expect.objectContaining({ tank_index: 3, why: "its ring changed with its amplitude" })]);
    expect(choice.note).toMatch(/on the 100 nF tank: the 1\.00 µF tank would ring nearer \(about 2\d\.\d kHz\) but its ring changed with its amplitude$/);
  });

  it("says why when no tank rings usably near the asked frequency, or at all (150 mH under a 0.8 V limit)", async () => {
    const e = await read("bobbin-coil-150m", { test_frequency_hz: 10e3, max_peak_v: 0.8 }).catch((x) => x);
    expect(e.code).toBe("NO_SETTING");
    expect(e.message).toMatch(/^no setting gives a usable ring near the asked 10\.0 kHz or at any other frequency within the limits\./);
    // Each setting's reason follows: a limit or too few edges.
    expect(e.message).toMatch(/refused, (too few edges would clear the comparator thresholds|its ring could reach)/);
  });

  it("says the asked frequency is beyond what the part reaches on this tester", async () => {
    const r = await read("drawer-choke-330u", { test_frequency_hz: 1e6 });
    expect(r.settings.tank).toBe(0);
    expect(r.test_frequency!.note).toMatch(/times lower\): the nearest of this tester's tanks, the highest this part rings at on them/);
  });

  it("refuses a frequency outside what a tester rings at", async () => {
    await expect(read("drawer-choke-330u", { test_frequency_hz: 5 })).rejects.toThrow(/test_frequency_hz.*100 to 2000000 Hz/);
  });
});

describe("measure --freq", () => {
  it("prints the asked and the reached frequency in text and JSON", () => {
    const text = runCli(["measure", "--sim", "drawer-choke-330u", "--freq", "10k"]);
    expect(text.status, text.stderr).toBe(0);
    expect(text.stdout).toMatch(/test freq\. {3}asked 10\.0 kHz, rang at 8\.7\d kHz \(-1\d %\): the nearest of this tester's tanks/);
    const json = runCli(["measure", "--sim", "filter-coil-4m7", "--freq", "10 kHz", "--json"]);
    expect(json.status, json.stderr).toBe(0);
    const r = JSON.parse(json.stdout);
    expect(r.settings.range.tank_index).toBe(2);
    expect(r.test_frequency).toMatchObject({ asked_hz: 10e3, tank_index: 2, nearest: true });
  });

  it.each([
    [["--freq", "10uF"], /--freq: .*capacitance/],
    [["--freq", "5M"], /--freq: .*outside the ring frequencies a tester works at/],
    [["--freq", "10k", "--drive", "1", "--tank", "2"], /--freq lets ranging choose the tank/],
  ])("refuses %j with a usage error", (extra, message) => {
    const r = runCli(["measure", "--sim", "drawer-choke-330u", ...extra]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(message);
  });
});

describe("one setting through a session (SettingHold)", () => {
  it("holds the first reading's setting, and ranges again for another part or a refusal, saying why", async () => {
    const t = await openTester({ scenario: "drawer-choke-330u" });
    try {
      const hold = new SettingHold();
      const first = await hold.measure(t.client, {});
      const held = { drive: first.reading!.settings.drive, tank: first.reading!.settings.tank };
      expect(first.changed).toBeUndefined();
      expect(hold.held).toMatchObject(held);
      const again = await hold.measure(t.client, {});
      expect(again.reading!.settings).toMatchObject(held);
      expect(again.reading!.capture.range).toMatchObject({ drive_index: held.drive, tank_index: held.tank });
      // A 100 mH part on the held setting of a 330 µH one: its ring would pass the limit, so the
      // setting is refused before any pulse on it, and ranging chooses again.
      t.sim!.part = { inductance_h: 0.1, series_ohm: 60, self_capacitance_f: 25e-12 };
      const big = await hold.measure(t.client, {});
      expect(big.changed).toMatch(/^the held setting 100 Ω with 100 nF was refused \(SETTING_UNSAFE\); ranging again chose the setting .* \(1\.5\d kHz\)$/);
      expect(Math.abs(big.reading!.analysis.inductance_h / 0.1 - 1)).toBeLessThan(0.02);
      const heldBig = hold.held!;
      // A 10 µH part is safe on the 100 mH part's setting, but it is another part: ranging again.
      t.sim!.part = { inductance_h: 10e-6, series_ohm: 0.05, self_capacitance_f: 2e-12 };
      const small = await hold.measure(t.client, {});
      expect(small.changed).toMatch(/^another part: L 100 mH → 10\.0 µH on the held setting .*; ranging again chose/);
      expect(hold.held).not.toMatchObject({ drive: heldBig.drive, tank: heldBig.tank });
      // Open clips end the part: nothing is held, the next part ranges.
      t.sim!.part = null;
      expect((await hold.measure(t.client, {})).error?.code).toBe("NO_RING");
      expect(hold.held).toBeNull();
    } finally {
      await t.close();
    }
  });
});

describe("a trend verdict never spans a change of setting", () => {
  it("SettingHistory starts again when the setting changes", () => {
    const h = new SettingHistory(40);
    expect(h.pushOn("1/3", 328.7e-6, 3.8e-6)).toBe(false);
    expect(h.pushOn("1/3", 328.8e-6, 3.8e-6)).toBe(false);
    expect(h.pushOn("1/3", 328.6e-6, 3.8e-6)).toBe(false);
    expect(assessStability(h.values, h.u).state).toBe("steady");
    expect(h.pushOn("2/2", 331.5e-6, 3.8e-6)).toBe(true);
    expect(h.values).toEqual([331.5e-6]);
    expect(assessStability(h.values, h.u).state).toBe("gathering");
  });

  it("measure --watch on the X7R tank mix-up keeps one setting, and restarts its trend, saying why, when a refusal changes it", () => {
    const r = runCli(["measure", "--sim", "x7r-tank-mixup", "--watch", "--count", "12", "--interval-ms", "0", "--json"]);
    expect(r.status, r.stderr).toBe(0);
    const lines = r.stdout.trim().split("\n").map((l) => JSON.parse(l));
    expect(lines).toHaveLength(12);
    const setting = (l: { settings: { range: { drive_index: number; tank_index: number } } }) => `${l.settings.range.drive_index}/${l.settings.range.tank_index}`;
    let changes = 0;
    let sinceRestart: string[] = [];
    lines.forEach((l, i) => {
      expect(l.error, `reading ${i + 1}`).toBeUndefined();
      if (i > 0 && setting(l) !== setting(lines[i - 1])) {
        changes++;
        expect(l.trend_restarted, `reading ${i + 1} changed the setting`).toMatch(/^trend restarted: the held setting .* was refused \([A-Z_]+\); ranging again chose/);
        sinceRestart = [];
      } else {
        expect(l.trend_restarted).toBeUndefined();
      }
      sinceRestart.push(setting(l));
      // Every verdict rests on readings of one setting only, and at least three of them.
      if (l.stability !== "gathering") expect(sinceRestart.length).toBeGreaterThanOrEqual(3);
      else expect(sinceRestart.length).toBeLessThan(3);
    });
    // The setting is held: at most one change in twelve readings (ranging alone hopped between the 1 µF and 100 nF tanks).
    expect(changes).toBeLessThanOrEqual(1);
  });
});

describe("sort holds each part's setting", () => {
  it("the X7R part's readings stay on its first reading's setting; ranging again only after a refusal, and then said", async () => {
    const t = await openTester({ scenario: "x7r-tank-mixup" });
    try {
      type Item = { kind: "reading"; phases: Set<string>; tank: number } | { kind: "changed"; message: string };
      const timeline: Item[] = [];
      let cur = { phases: new Set<string>(), tank: -1 };
      const onEvent = (e: MeasureEvent) => {
        if (e.type === "pulse") {
          cur.phases.add(e.phase);
          if (e.phase !== "probe") cur.tank = e.setting.tank;
        }
        if (e.type === "done") {
          timeline.push({ kind: "reading", ...cur });
          cur = { phases: new Set(), tank: -1 };
        }
      };
      const session = new SortSession({ nominal_h: 330e-6, tolerance: parseTolerance("10%") });
      // Six agreeing readings before the part is recorded: ranging alone moved between tanks within them.
      const parts = await runSort({
        client: t.client, session, maxParts: 1, presence: { settle: 6 }, measure: { onEvent },
        onEvent: (e) => { if (e.kind === "setting-changed") timeline.push({ kind: "changed", message: e.message }); },
      });
      expect(parts).toHaveLength(1);
      const readings = timeline.filter((i) => i.kind === "reading");
      expect(readings.length).toBeGreaterThanOrEqual(6);
      expect([...readings[0].phases]).toContain("ranging");
      let held = readings[0].tank;
      timeline.forEach((item, i) => {
        if (item.kind !== "reading" || item === readings[0]) return;
        if (item.phases.has("ranging")) {
          // Ranging again happens only right after a refusal on the held setting, and is announced.
          const next = timeline[i + 1];
          expect(next?.kind, `reading ${i} ranged again`).toBe("changed");
          if (next?.kind === "changed") expect(next.message).toMatch(/^the held setting .* was refused \([A-Z_]+\); ranging again chose/);
          held = item.tank;
        } else {
          expect([...item.phases].sort()).toEqual(["fixed", "probe"]);
          expect(item.tank).toBe(held);
        }
      });
      expect(parts[0].tank_index).toBe(held);
    } finally {
      await t.close();
    }
  });

  it("sort --freq states how near each part's reading came", () => {
    const r = runCli(["sort", "--sim", "--nominal", "330u", "--tol", "10%", "--sim-tray", "330u,4.7m", "--freq", "10k", "--log", join(tmp, "fsort")]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr.match(/asked 10\.0 kHz, rang at 8\.\d+ kHz \(-1\d %\): the nearest of this tester's tanks/g)).toHaveLength(1);
    expect(r.stderr).toMatch(/asked 10\.0 kHz, rang at 7\.\d+ kHz \(-[23]\d %\): the nearest of this tester's tanks/);
  });
});

describe("--freq on wind and advise, and in every help page", () => {
  it("wind --freq rings each reading on the tank nearest the asked frequency", () => {
    const r = runCli(["wind", "--sim", "--target", "100u", "--turns", "60,70", "--freq", "100k", "--json"]);
    expect(r.status, r.stderr).toBe(0);
    const text = runCli(["wind", "--sim", "--target", "100u", "--turns", "60,70", "--freq", "100k"]);
    expect(text.status, text.stderr).toBe(0);
    expect(text.stderr.match(/asked 100 kHz, rang at \d+(\.\d+)? kHz \([^)]*\): the nearest of this tester's tanks/g)).toHaveLength(2);
  });

  it("advise --freq orders the settings nearest tank first and predicts how near", () => {
    const r = runCli(["advise", "--sim", "drawer-choke-330u", "--freq", "30k", "--json"]);
    expect(r.status, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    const allowed = j.advice.filter((a: { refused: string }) => a.refused === "");
    // 330 µH on 100 nF rings at about 27.7 kHz (LC resonance), the tank nearest 30 kHz.
    expect(allowed[0].tank).toBe(2);
    const d = allowed.map((a: { f_hz: number }) => Math.abs(Math.log(a.f_hz / 30e3)));
    for (let i = 1; i < d.length; i++) expect(d[i]).toBeGreaterThanOrEqual(d[i - 1] - 1e-9);
    expect(j.test_frequency).toMatchObject({ asked_hz: 30e3, tank_index: 2, nearest: true });
    expect(j.test_frequency.note).toMatch(/^asked 30\.0 kHz, would ring at about 2\d\.\d kHz/);
  });

  it.each(["measure", "sort", "wind", "advise"])("%s --help lists --freq with an example", (cmd) => {
    const r = runCli([cmd, "--help"]);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/^ {2}--freq F {2,}working frequency/m);
    expect(r.stdout).toMatch(new RegExp(`^ {2}henrytick ${cmd} --sim .*--freq \\d+k$`, "m"));
  });
});

describe("the drawer choke's Q no longer depends on whether the tester is calibrated", () => {
  it("with --freq 30k it rings on the 100 nF tank calibrated and uncalibrated (ranging alone moved to 1 µF once calibrated)", () => {
    const dir = mkdtempSync(join(tmp, "cal-"));
    const cal = runCli(["calibrate", "reference", "--sim", "--ref-h", "330u", "--ref-u-h", "0.1u", "--repeats", "1", "--config-dir", dir]);
    expect(cal.status, cal.stderr).toBe(0);
    const read = (...extra: string[]) => {
      const r = runCli(["measure", "--sim", "drawer-choke-330u", "--config-dir", dir, "--json", ...extra]);
      expect(r.status, r.stderr).toBe(0);
      return JSON.parse(r.stdout);
    };
    const plain = [read("--uncalibrated"), read()];
    const asked = [read("--uncalibrated", "--freq", "30k"), read("--freq", "30k")];
    // The finding: left to itself, ranging picks another tank once calibrated, and Q moves with it.
    expect(plain.map((r) => r.settings.range.tank_index)).toEqual([2, 3]);
    expect(asked.map((r) => r.settings.range.tank_index)).toEqual([2, 2]);
    expect(asked[1].settings.calibration.tank_calibrated).toBe(true);
    // One frequency, one Q: the two agree within their expanded uncertainties.
    expect(Math.abs(asked[0].q - asked[1].q)).toBeLessThan(Math.hypot(asked[0].q_u, asked[1].q_u));
  });
});
