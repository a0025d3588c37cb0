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
