// Repeated fixed-setting readings with the next pulse started before the last capture is
// analysed: the same readings in the same order as a loop of measurePart calls, an abort that
// ends the sequence with every whole capture given and the tester ready, and an early break that
// leaves the client clean. Pulses are counted by the simulated tester itself.

import { describe, expect, it } from "vitest";
import { openTester, type TesterTarget } from "../open-tester.ts";
import { estimateFromReading } from "../ranging/estimate.ts";
import { measurePart, MeasureError, type Reading } from "./measure-part.ts";
import { repeatReadings, type RepeatOutcome } from "./repeat-readings.ts";
import type { PartModel } from "../sim/scenario.ts";

const COIL: PartModel = { inductance_h: 4.7e-6, series_ohm: 0.05, self_capacitance_f: 2e-12 };

/** What must agree between two readings of the same pulse (the record's clock time may not). */
function essence(o: RepeatOutcome): unknown {
  if (!o.ok) return { code: o.error.code, message: o.error.message };
  const r = o.reading;
  return { analysis: r.analysis, settings: r.settings, edges: r.capture.edges, range: r.capture.range, suspect: r.suspect };
}

async function loopOf(target: TesterTarget, n: number, fixed: { drive?: number; tank?: number }): Promise<unknown[]> {
  const t = await openTester(target);
  try {
    const first = await measurePart(t.client);
    const estimate = estimateFromReading(t.client.profile, first.settings, first.analysis);
    const out: unknown[] = [];
    for (let i = 0; i < n; i++) {
      try {
        out.push(essence({ ok: true, reading: await measurePart(t.client, { drive: fixed.drive ?? first.settings.drive, tank: fixed.tank ?? first.settings.tank, estimate }) }));
      } catch (e) {
        if (!(e instanceof MeasureError)) throw e;
        out.push(essence({ ok: false, error: e }));
      }
    }
    return out;
  } finally {
    await t.close();
  }
}

async function repeatedOf(target: TesterTarget, n: number, fixed: { drive?: number; tank?: number }, overlap: boolean): Promise<unknown[]> {
  const t = await openTester(target);
  try {
    const first = await measurePart(t.client);
    const out: unknown[] = [];
    for await (const o of repeatReadings(t.client, { after: first, count: n, overlap, ...fixed })) out.push(essence(o));
    return out;
  } finally {
    await t.close();
  }
}

describe("repeated readings on a fixed setting", () => {
  it("gives the readings a loop of measurePart gives, in the same order, with and without overlap", async () => {
    const loop = await loopOf({ part: COIL, seed: 47 }, 12, {});
    expect(loop).toHaveLength(12);
    expect(await repeatedOf({ part: COIL, seed: 47 }, 12, {}, true)).toEqual(loop);
    expect(await repeatedOf({ part: COIL, seed: 47 }, 12, {}, false)).toEqual(loop);
  });

  it("gives a reading's part fault as its outcome, in its place, and goes on", async () => {
    // The X7R tank on the 100 Ω drive: its capacitance falls with the ring voltage, the frequency
    // drifts by about -950 ± 150 ppm over the kept edges (L by 0.19 %), and every reading is
    // refused CORE_SATURATING; the repetition gives each refusal in its place and goes on.
    const target = { scenario: "x7r-tank-mixup" };
    const loop = await loopOf(target, 6, { drive: 1, tank: 1 });
    const repeated = await repeatedOf(target, 6, { drive: 1, tank: 1 }, true);
    expect(repeated).toEqual(loop);
    const codes = repeated.map((o) => (o as { code?: string }).code ?? "ok");
    expect(codes).toEqual(Array(6).fill("CORE_SATURATING"));
  });

  it("ends on an abort with every whole capture given, and the tester reads again", async () => {
    const t = await openTester({ part: COIL, seed: 9 });
    try {
      const first = await measurePart(t.client);
      const ac = new AbortController();
      const before = t.sim!.stats.pulses;
      const got: Reading[] = [];
      for await (const o of repeatReadings(t.client, { after: first, signal: ac.signal })) {
        if (o.ok) got.push(o.reading);
        if (got.length === 3) ac.abort();
      }
      const fired = t.sim!.stats.pulses - before;
      // The pulse under way when the abort came is either given (its capture was whole) or stopped.
      expect(got.length).toBeGreaterThanOrEqual(3);
      expect(fired - got.length).toBeGreaterThanOrEqual(0);
      expect(fired - got.length).toBeLessThanOrEqual(1);
      const next = await measurePart(t.client);
      expect(next.analysis.inductance_h).toBeCloseTo(first.analysis.inductance_h, 8);
    } finally {
      await t.close();
    }
  });

  it("stops the pulse under way when the iteration is left early", async () => {
    const t = await openTester({ part: COIL, seed: 10 });
    try {
      const first = await measurePart(t.client);
      const before = t.sim!.stats.pulses;
      let n = 0;
      for await (const o of repeatReadings(t.client, { after: first, count: 100 })) {
        expect(o.ok).toBe(true);
        if (++n === 2) break;
      }
      expect(t.sim!.stats.pulses - before).toBeLessThanOrEqual(3);
      const next = await measurePart(t.client, { drive: first.settings.drive, tank: first.settings.tank, estimate: estimateFromReading(t.client.profile, first.settings, first.analysis) });
      expect(next.settings.drive).toBe(first.settings.drive);
    } finally {
      await t.close();
    }
  });

  it("does not pulse when the signal has fired already", async () => {
    const t = await openTester({ part: COIL, seed: 11 });
    try {
      const first = await measurePart(t.client);
      const before = t.sim!.stats.pulses;
      const ac = new AbortController();
      ac.abort();
      const got: RepeatOutcome[] = [];
      for await (const o of repeatReadings(t.client, { after: first, signal: ac.signal, count: 5 })) got.push(o);
      expect(got).toHaveLength(0);
      expect(t.sim!.stats.pulses).toBe(before);
    } finally {
      await t.close();
    }
  });
});

describe("a fixed setting's capture window", () => {
  it("ends 4 ring periods after the last edge, as a ranged capture does, not after a fixed 20 ms", async () => {
    const t = await openTester({ part: COIL, seed: 3 });
    try {
      const first = await measurePart(t.client);
      const estimate = estimateFromReading(t.client.profile, first.settings, first.analysis);
      const r = await measurePart(t.client, { drive: 0, tank: 2, estimate });
      // The 4.7 µH part on 100 nF rings at about 230 kHz: 4 periods are some 17 µs, so the 50 µs
      // floor (4 periods of the predicted frequency; 10 % allowed for the prediction).
      expect(r.settings.quiet_us).toBeLessThanOrEqual(Math.max(50, Math.ceil(4.4e6 / r.analysis.fd_hz)));
      expect(r.capture.range?.quiet_us).toBe(r.settings.quiet_us);
    } finally {
      await t.close();
    }
  });
});

describe("repeated readings when the part comes off the clips", () => {
  it("end with the first capture that has no ring, and pulse no more on the setting checked for the old part", async () => {
    const t = await openTester({ part: COIL, seed: 12 });
    try {
      const first = await measurePart(t.client);
      const codes: string[] = [];
      for await (const o of repeatReadings(t.client, { after: first, count: 20 })) {
        codes.push(o.ok ? "ok" : o.error.code);
        if (codes.length === 3) t.sim!.part = null; // the part is taken off
      }
      expect(codes.slice(0, 3)).toEqual(["ok", "ok", "ok"]);
      expect(codes.slice(3)).toEqual(["EMPTY_CAPTURE"]);
      // The client is ready for the next reading (the open clips refuse with their own code).
      await expect(measurePart(t.client)).rejects.toMatchObject({ code: expect.any(String) });
    } finally {
      await t.close();
    }
  });
});
