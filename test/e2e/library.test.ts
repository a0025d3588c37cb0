// End to end through the library API with parts spread over 1 µH - 100 mH, including the
// decade ends, and parts that cannot be measured.

import { describe, expect, it } from "vitest";
import { openTester, measurePart, MeasureError } from "../../host/src/index.ts";
import type { PartModel } from "../../host/src/index.ts";
import { referenceBoard } from "../../host/src/sim/board-model.ts";
import { expectedReading } from "../../host/src/sim/front-end.ts";

async function read(part: PartModel | null, seed = 3) {
  const t = await openTester({ part, seed });
  try {
    return await measurePart(t.client);
  } finally {
    await t.close();
  }
}

describe("measurePart on the simulated tester", () => {
  it.each([
    { inductance_h: 1.0e-6, series_ohm: 0.02, self_capacitance_f: 1e-12 },
    { inductance_h: 10e-6, series_ohm: 0.05, self_capacitance_f: 2e-12 },
    { inductance_h: 1.0e-3, series_ohm: 1.2, self_capacitance_f: 8e-12 },
    { inductance_h: 100e-3, series_ohm: 60, self_capacitance_f: 25e-12 },
  ])("recovers L = $inductance_h H within 0.5 %", async (part) => {
    const r = await read(part);
    const expected = expectedReading(referenceBoard(), part, r.settings.drive, r.settings.tank, r.capture.tank_c_f);
    expect(Math.abs(r.analysis.inductance_h / expected.inductance_h - 1)).toBeLessThan(0.001);
    expect(Math.abs(r.analysis.inductance_h / part.inductance_h - 1)).toBeLessThan(0.005);
    expect(Math.abs(r.analysis.inductance_h - part.inductance_h)).toBeLessThan(r.analysis.inductance_u_h);
    expect(r.prediction?.peak_v).toBeLessThan(30);
  });

  it("says nothing rings when the clips are open", async () => {
    await expect(read(null)).rejects.toMatchObject({ code: "NO_RING" });
    await expect(read(null)).rejects.toBeInstanceOf(MeasureError);
  });

  it("gives no number for a plain resistor (no inductance worth ringing)", async () => {
    await expect(read({ inductance_h: 1e-9, series_ohm: 47, self_capacitance_f: 0 })).rejects.toMatchObject({ code: "NO_RING" });
  });
});
