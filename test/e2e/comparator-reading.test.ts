// Readings get the comparator correction (docs/method.md §2a): the tester's profile states its
// comparator's noise, delays and overdrive charge (frame PD, docs/protocol.md), the capture
// records what the reading applied, and `analyze` of the saved capture applies exactly that.
// On the reference simulated board, whose comparator decides by first passage of ring +
// continuous noise (docs/hardware.md), a slow ring's Q is then inside its U. The truth is the
// simulator's own circuit (expectedReading: the simulator's ground truth, no outside source).
// The CLI part needs the built checkout (`npm run build`).

import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { DeviceClient, measurePart } from "../../host/src/index.ts";
import type { PartModel } from "../../host/src/index.ts";
import { referenceBoard } from "../../host/src/sim/board-model.ts";
import { expectedReading } from "../../host/src/sim/front-end.ts";
import { SimTester } from "../../host/src/sim/sim-tester.ts";
import { SimTransport } from "../../host/src/transport/sim-transport.ts";
import { runCli } from "./run-cli.ts";

// The reference board, deciding by first passage (its default; stated so that the check means
// the same on any version of the board model).
function firstPassageBoard() {
  const b = referenceBoard();
  return { ...b, comparator: { ...b.comparator, noise_model: "first-passage" as const } };
}

/** Slow rings, high Q: where first passage moves the tail edges most (invented parts). */
const SLOW: { name: string; part: PartModel; setting: { drive: number; tank: number; charge_us: number } }[] = [
  { name: "330 µH, Q 134 at 28 kHz", part: { inductance_h: 330e-6, series_ohm: 0.42, self_capacitance_f: 3e-12 }, setting: { drive: 1, tank: 2, charge_us: 99 } },
  { name: "1 mH, Q 363 at 16 kHz", part: { inductance_h: 1e-3, series_ohm: 0.25, self_capacitance_f: 5e-12 }, setting: { drive: 1, tank: 2, charge_us: 100 } },
];

describe("a reading on a first-passage comparator", () => {
  it.each(SLOW)("$name: Q and L within U on each of three seeds (thresholds calibrated)", async ({ part, setting }) => {
    const board = firstPassageBoard();
    const c = board.comparator;
    for (const seed of [1, 2, 3]) {
      const sim = new SimTester({ part, seed, board });
      const client = await DeviceClient.connect(new SimTransport(sim));
      // Thresholds as a threshold calibration finds them (the comparator's 0.4 mV offset): the
      // check is on the timing correction, not on an uncalibrated offset.
      const calibration = { source: "test: thresholds as calibrated", thresholds_v: [c.rising_v + c.offset_v!, c.falling_v + c.offset_v!] as [number, number] };
      const r = await measurePart(client, { ...setting, calibration });
      await client.close();
      const truth = expectedReading(board, part, setting.drive, setting.tank, client.profile.tanks[setting.tank].nominal_f);
      const a = r.analysis;
      expect(Math.abs(a.q - truth.q), `seed ${seed}: Q ${a.q} ± ${a.q_u} against ${truth.q}`).toBeLessThanOrEqual(a.q_u);
      expect(Math.abs(a.inductance_h - truth.inductance_h)).toBeLessThanOrEqual(a.inductance_u_h);
      expect(r.capture.comparator?.noise_bw_hz).toBe(c.noise_bw_hz);
    }
  });
});

describe("analyze applies the comparator timing the reading applied", () => {
  const dir = mkdtempSync(join(tmpdir(), "henrytick-comparator-reading-"));
  const scenario = join(dir, "slow-coil.json");
  writeFileSync(scenario, JSON.stringify({ format: "henrytick-scenario", version: 1, name: "slow-coil", story: "test part", part: SLOW[1].part, seed: 4 }));

  it("the saved capture records the board profile's comparator, and analyze prints measure's result", () => {
    const capture = join(dir, "slow.json");
    const measured = runCli(["measure", "--sim", scenario, "--drive", "1", "--tank", "2", "--save", capture, "--json"]);
    expect(measured.status, measured.stderr).toBe(0);
    const analysed = runCli(["analyze", capture, "--json"]);
    expect(analysed.status, analysed.stderr).toBe(0);
    expect(JSON.parse(analysed.stdout)).toEqual(JSON.parse(measured.stdout));
    const c = referenceBoard().comparator;
    const record = JSON.parse(readFileSync(capture, "utf8"));
    // The reference board's profile: 0.6 mV in 2 MHz, 45/45 ns (skew 0, taken as exact while
    // uncalibrated), 2 pV s ± 50 %.
    expect(record.comparator).toEqual({
      skew_s: 0, skew_u_s: 0, skew_source: "board profile",
      noise_bw_hz: c.noise_bw_hz, noise_v: c.noise_v, noise_source: "board profile", overdrive_v_s: c.overdrive_v_s, overdrive_u_v_s: 0.5 * c.overdrive_v_s!,
    });
    expect(JSON.parse(measured.stdout).settings.comparator).toEqual(record.comparator);
    // The record is what the analysis uses: without it the same edges read another Q.
    delete record.comparator;
    const bare = join(dir, "bare.json");
    writeFileSync(bare, JSON.stringify(record));
    const plain = runCli(["analyze", bare, "--json"]);
    expect(plain.status, plain.stderr).toBe(0);
    expect(JSON.parse(plain.stdout).q).not.toBeCloseTo(JSON.parse(measured.stdout).q, 6);
  });
});
