// A board is replaced by its data alone: for every board file besides the reference one, the
// firmware image built from that file runs in the simulated tester of that board's simulated
// unit, and the library measures known parts through it end to end (probe, ranging, pulse,
// capture, analysis) with no code told which board it is: the host learns the tick rate, the
// resistors and the tanks from the tester's profile.

import { beforeAll, describe, expect, it } from "vitest";
import { DeviceClient } from "../../host/src/device/client.ts";
import { measurePart } from "../../host/src/measure/measure-part.ts";
import { expectedReading } from "../../host/src/sim/front-end.ts";
import type { PartModel } from "../../host/src/sim/scenario.ts";
import { SimTester } from "../../host/src/sim/sim-tester.ts";
import { SimTransport } from "../../host/src/transport/sim-transport.ts";
import { type BoardUnderTest, boardUnderTest } from "../../firmware/test/board-images.ts";
import { DEFAULT_BOARD, boardNames } from "../../firmware/tools/board-source.ts";

const others = boardNames().filter((n) => n !== DEFAULT_BOARD);

const PARTS: PartModel[] = [
  { inductance_h: 10e-6, series_ohm: 0.05, self_capacitance_f: 2e-12 },
  { inductance_h: 330e-6, series_ohm: 0.4, self_capacitance_f: 5e-12 },
  { inductance_h: 4.7e-3, series_ohm: 3, self_capacitance_f: 10e-12 },
];

describe.each(others)("the library on board %s (its own image and simulated unit)", (name) => {
  let b: BoardUnderTest;
  beforeAll(async () => {
    b = await boardUnderTest(name);
  });

  it("differs from the reference board where the host must notice: tick rate, resistors, tanks", async () => {
    const ref = await boardUnderTest(DEFAULT_BOARD);
    expect(b.file.tick_hz).not.toBe(ref.file.tick_hz);
    expect(b.file.drives.map((d) => d.ohm)).not.toEqual(ref.file.drives.map((d) => d.ohm));
    expect(b.file.tanks.map((t) => t.nominal_f)).not.toEqual(ref.file.tanks.map((t) => t.nominal_f));
  });

  it.each(PARTS)("measures L = $inductance_h H as the board's front end rings it, within U", async (part) => {
    const sim = new SimTester({ part, seed: 3, board: b.board, firmware: b.image });
    const client = await DeviceClient.connect(new SimTransport(sim));
    try {
      expect(client.profile.tick_hz).toBe(b.file.tick_hz);
      const r = await measurePart(client);
      // The capture is this board's: its tick rate, one of its tanks at the nominal value.
      expect(r.capture.tick_hz).toBe(b.file.tick_hz);
      expect(r.settings.drive).toBeLessThan(b.file.drives.length);
      expect(r.capture.tank_c_f).toBe(b.file.tanks[r.settings.tank].nominal_f);
      // What a correct uncalibrated analysis must report on this unit (the simulator's closed-form
      // ring of the part with the unit's tank, fixture and switch node, over the nominal tank).
      const expected = expectedReading(b.board, part, r.settings.drive, r.settings.tank, r.capture.tank_c_f);
      expect(Math.abs(r.analysis.inductance_h - expected.inductance_h)).toBeLessThan(r.analysis.inductance_u_h);
      // The part's own value within the reading's U, which carries the nominal tank tolerance
      // (as on the reference board, test/e2e/library.test.ts).
      expect(Math.abs(r.analysis.inductance_h - part.inductance_h)).toBeLessThan(r.analysis.inductance_u_h);
      expect(r.prediction?.peak_v).toBeLessThan(30);
    } finally {
      await client.close();
    }
  });
});
