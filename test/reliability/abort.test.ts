// Abandoning a reading through its AbortSignal stops the tester: no pulse starts after the abort,
// the tester is told (AB), and the client is ready for the next reading, which returns its own
// pulse's capture. Pulses are counted by the simulated tester itself.

import { describe, expect, it } from "vitest";
import { measureAbortable } from "../../host/src/workflows/abortable-measure.ts";
import { measurePart } from "../../host/src/measure/measure-part.ts";
import { caught, openRig, QUICK_PART, settle } from "./sim-rig.ts";
import type { Rig } from "./sim-rig.ts";

/** Time for an abandoned sequence to show itself: ranging this part pulses several times a second. */
const WATCH_MS = 1500;
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function nextReadingIsClean(rig: Rig): Promise<void> {
  const before = rig.pulses();
  const msBefore = rig.faults.sent.MS ?? 0;
  const r = await measurePart(rig.client);
  await settle();
  // Its own pulses only: every MS sent for it fired once, and nothing else fired meanwhile.
  expect(rig.pulses() - before).toBe((rig.faults.sent.MS ?? 0) - msBefore);
  // The part's value (1 mH, the circuit's truth) within twice the stated expanded uncertainty.
  expect(Math.abs(r.analysis.inductance_h - QUICK_PART.inductance_h)).toBeLessThan(2 * r.analysis.inductance_u_h + 0.02 * QUICK_PART.inductance_h);
}

describe("an abort stops the tester at the next pulse boundary", () => {
  it("aborted as the second pulse is announced: that pulse never fires, AB is sent, the next reading is clean", async () => {
    const rig = await openRig({ seed: 31 });
    try {
      const ac = new AbortController();
      let announced = 0;
      const e = await caught(() =>
        measureAbortable(rig.client, {
          signal: ac.signal,
          onProgress: () => {
            if (++announced === 2) ac.abort();
          },
        }),
      );
      expect(e).toMatchObject({ code: "ABORTED" });
      await settle();
      const atAbort = rig.pulses();
      expect(atAbort).toBe(1);
      await sleep(WATCH_MS); // an abandoned sequence would go on pulsing here
      expect(rig.pulses()).toBe(atAbort);
      expect(rig.faults.sent.AB).toBe(1);
      await nextReadingIsClean(rig);
    } finally {
      await rig.close();
    }
  });

  it("aborted while a capture is in flight: AB goes out at once, that capture is discarded, nothing fires after it", async () => {
    const rig = await openRig({ seed: 32 });
    try {
      const ac = new AbortController();
      const e = await caught(() =>
        measureAbortable(rig.client, {
          signal: ac.signal,
          // After the announcement the client writes MS; the abort lands while its reply is awaited.
          onProgress: () => void setImmediate(() => ac.abort()),
        }),
      );
      expect(e).toMatchObject({ code: "ABORTED" });
      await settle();
      const atAbort = rig.pulses();
      expect(atAbort).toBeLessThanOrEqual(1);
      await sleep(WATCH_MS);
      expect(rig.pulses()).toBe(atAbort);
      expect(rig.faults.sent.AB).toBe(1);
      await nextReadingIsClean(rig);
    } finally {
      await rig.close();
    }
  });

  it("typed events: pulses counted from 1, the fraction never falls and ends at 1, the string callback gets each event's message", async () => {
    const rig = await openRig({ seed: 33 });
    try {
      const events: import("../../host/src/measure/events.ts").MeasureEvent[] = [];
      const lines: string[] = [];
      await measurePart(rig.client, { onEvent: (ev) => events.push(ev), onProgress: (m) => lines.push(m) });
      await settle();
      const pulses = events.filter((ev) => ev.type === "pulse");
      expect(pulses.map((ev) => ev.pulse)).toEqual(pulses.map((_, i) => i + 1));
      expect(pulses.length).toBe(rig.pulses());
      expect(pulses[0].phase).toBe("probe");
      const fractions = events.map((ev) => ev.fraction);
      for (let i = 1; i < fractions.length; i++) expect(fractions[i]).toBeGreaterThanOrEqual(fractions[i - 1]);
      const last = events[events.length - 1];
      expect(last).toMatchObject({ type: "done", fraction: 1, pulses: rig.pulses(), aborted: false });
      expect(lines).toEqual(events.filter((ev) => ev.type !== "done").map((ev) => ev.message));
      for (const ev of pulses) {
        expect(ev.setting.drive_ohm).toBe(rig.client.profile.drives[ev.setting.drive].ohm);
        expect(ev.setting.tank_f).toBe(rig.client.profile.tanks[ev.setting.tank].nominal_f);
      }
    } finally {
      await rig.close();
    }
  });
});
