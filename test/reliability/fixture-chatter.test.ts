// FIXTURE_CHATTER both ways. Clean low-Q rings (the simulator's front end with sound contacts)
// must never be called chatter, whatever the analysis rejects at their ends; rings through a
// simulated intermittent clip contact (sim/fixture-chatter.ts: the contact opens for moments,
// the ring stands still and loses its energy) must never give a confident wrong number: each
// reading is refused as chatter, refused with another code, or agrees with the circuit's value.

import { mkdtempSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { measurePart } from "../../host/src/measure/measure-part.ts";
import { chatterOf } from "../../host/src/measure/part-fault.ts";
import { openTester } from "../../host/src/open-tester.ts";
import { nominalBoard, referenceBoard } from "../../host/src/sim/board-model.ts";
import type { ContactChatter } from "../../host/src/sim/fixture-chatter.ts";
import { expectedReading } from "../../host/src/sim/front-end.ts";
import type { PartModel, Scenario } from "../../host/src/sim/scenario.ts";
import { runCli } from "../e2e/run-cli.ts";

/** The part: 150 mH, Q about 9 on the 1 nF tank (series loss as the simulated tray's parts). */
const PART: PartModel = { inductance_h: 150e-3, series_ohm: 150e-3 * 8000, self_capacitance_f: 4e-12 };
/** Contact opening about four times per millisecond of ring, each time for 10 µs to 60 µs (invented demo values). */
const OPENING: ContactChatter = { events_per_s: 4000, open_share: 1, open_s: [10e-6, 60e-6] };
const SEEDS = Array.from({ length: 10 }, (_, i) => i + 1);

function scenario(seed: number, chatter?: ContactChatter): Scenario {
  return { format: "henrytick-scenario", version: 1, name: "chatter-test", story: "", part: PART, seed, ...(chatter ? { fixture: { chatter } } : {}) };
}

type Outcome = { kind: "reading"; l_h: number; u_h: number; drive: number; tank: number } | { kind: "refused"; code: string };

async function readOnce(sc: Scenario): Promise<Outcome> {
  // A long reply timeout: the simulator integrates the chattering ring while the host's clock runs.
  const t = await openTester({ scenario: sc }, { reply_timeout_ms: 20_000 });
  try {
    const r = await measurePart(t.client);
    return { kind: "reading", l_h: r.analysis.inductance_h, u_h: r.analysis.inductance_u_h, drive: r.settings.drive, tank: r.settings.tank };
  } catch (e) {
    const code = (e as { code?: string }).code;
    if (!code) throw e;
    return { kind: "refused", code };
  } finally {
    await t.close();
  }
}

function truth(o: { drive: number; tank: number }): number {
  return expectedReading(referenceBoard(), PART, o.drive, o.tank, nominalBoard().tank_f[o.tank]).inductance_h;
}

describe("FIXTURE_CHATTER", () => {
  // Offset thresholds make the half-cycles above and below the ring's centre unequal, and more so
  // as it decays: on a short, strongly damped ring (a few µH on the 1 µF tank behind 100 ohm) the
  // long ones stand well over the median of all half-cycles. That is no break: a break is a
  // half-cycle long against those of its own polarity.
  // At the other end, a ring of a few ticks per half-cycle: the timer floors each edge to a tick,
  // so half-cycles of 6 and 7 ticks alternate with an 8 now and then, well over 1.2x a neighbour.
  it("never calls the unequal half-cycles of a short, strongly damped ring, or a tick's flooring on a fast one, a break", async () => {
    const found: string[] = [];
    const settings = [{ drive: 1, tank: 3, charge_us: 339 }, { drive: 1, tank: 0, charge_us: 2 }];
    for (const l of [1e-6, 1.5e-6, 2.2e-6, 3.3e-6, 4.7e-6]) {
      for (const [seed, s] of [1, 2, 3, 4, 5, 6].flatMap((seed) => settings.map((s) => [seed, s] as const))) {
        const t = await openTester({ part: { inductance_h: l, series_ohm: 0.02, self_capacitance_f: 1e-12 }, seed });
        try {
          const r = await measurePart(t.client, { ...s, keep_suspect: true });
          const ch = chatterOf(r.capture);
          if (ch.breaks > 0 || r.suspect?.code === "FIXTURE_CHATTER") found.push(`${l * 1e6} µH on tank ${s.tank}, seed ${seed}: ${ch.breaks} breaks, ${r.capture.edges.length} edges`);
        } finally {
          await t.close();
        }
      }
    }
    expect(found).toEqual([]);
  }, 120_000);

  it("never fires on clean rings of a Q≈9, 150 mH part (10 seeds)", async () => {
    for (const seed of SEEDS) {
      const o = await readOnce(scenario(seed));
      expect(o, `seed ${seed}`).toMatchObject({ kind: "reading" });
    }
  }, 120_000);

  it("fires on a chattering contact, and no chattering reading is a confident wrong number (10 seeds)", async () => {
    let flagged = 0;
    for (const seed of SEEDS) {
      const o = await readOnce(scenario(seed, OPENING));
      if (o.kind === "refused") {
        if (o.code === "FIXTURE_CHATTER") flagged++;
        continue;
      }
      // A reading that stands must agree with the circuit within twice its expanded uncertainty.
      expect(Math.abs(o.l_h - truth(o)), `seed ${seed}: ${o.l_h} ± ${o.u_h}`).toBeLessThan(2 * o.u_h);
    }
    expect(flagged).toBeGreaterThanOrEqual(7); // 8 of 10 when written
  }, 240_000);

  it("sort --sim --nominal 150m --tol 10% --count 3 records all three parts (clean simulated contacts)", () => {
    const dir = mkdtempSync(join(tmpdir(), "henrytick-chatter-sort-"));
    const r = runCli(["sort", "--sim", "--nominal", "150m", "--tol", "10%", "--count", "3", "--log", join(dir, "lot")], dir);
    expect(r.stdout + r.stderr).not.toMatch(/FIXTURE_CHATTER/);
    expect(r.stdout).toMatch(/3 parts:/);
  }, 120_000);
});
