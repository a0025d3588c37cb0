// Test frequency of the user's choice: ranging takes the tank whose ring is nearest the asked
// frequency (log distance), and the reading says how near it came. The expected tanks follow
// from f = 1 / (2π √(LC)) with the simulated parts' inductances and the reference board's
// nominal tanks (1 nF, 10 nF, 100 nF, 1 µF); the parts' values are the scenarios' own.

import { describe, expect, it } from "vitest";
import { measurePart, openTester } from "../../host/src/index.ts";
import type { MeasureOptions } from "../../host/src/index.ts";
import { runCli } from "./run-cli.ts";

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
