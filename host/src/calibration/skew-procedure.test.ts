// The skew procedure on the simulated tester, and the profile's skew reaching a reading: a board
// whose comparator's rising output is 20 ns slower than its falling one (an invented bench
// story; ordinary comparators differ by up to a few tens of ns, value from memory).

import { describe, expect, it } from "vitest";
import { DeviceClient } from "../device/client.ts";
import { ringInputFromCapture } from "../measure/capture-build.ts";
import { measurePart } from "../measure/measure-part.ts";
import { referenceBoard, type BoardModel } from "../sim/board-model.ts";
import { SimTester } from "../sim/sim-tester.ts";
import { SimTransport } from "../transport/sim-transport.ts";
import { appliedCalibration } from "./apply-profile.ts";
import { emptyProfile, validateProfile } from "./profile-schema.ts";
import { calibrateSkew } from "./skew-procedure.ts";

function skewedBoard(): BoardModel {
  const b = referenceBoard();
  // Thresholds as calibrated (no offset left) and no overdrive delay: the skew alone.
  return { ...b, comparator: { ...b.comparator, offset_v: 0, overdrive_v_s: 0, delay_rise_s: 65e-9, delay_fall_s: 45e-9 } };
}

describe("comparator skew procedure on the simulated tester", () => {
  it("finds the board's 20 ns from one coil on two tanks, and a reading then carries it into the analysis", async () => {
    const sim = new SimTester({ part: { inductance_h: 100e-6, series_ohm: 0.3, self_capacitance_f: 2e-12 }, seed: 3, board: skewedBoard() });
    const client = await DeviceClient.connect(new SimTransport(sim));
    const { entry, fit } = await calibrateSkew(client, { captures: 2, now: () => new Date("2026-12-04T20:00:00Z") });
    expect(entry.method).toBe("skew-fit");
    expect(new Set(fit.rings.map((r) => Math.round(r.f0_hz / 1e3))).size).toBe(2);
    expect(Math.abs(entry.skew_s - 20e-9)).toBeLessThan(3 * entry.u_skew_s);
    expect(entry.u_skew_s).toBeLessThan(5e-9);
    // Stored, read back, applied: the capture records it and the analysis input takes it.
    const profile = validateProfile(JSON.parse(JSON.stringify({ ...emptyProfile("5eed0001", new Date("2026-12-04T20:00:00Z")), skew: entry })));
    const cal = appliedCalibration(profile, "test profile");
    const r = await measurePart(client, { calibration: cal });
    expect(r.capture.calibration?.comparator_skew_s).toBe(entry.skew_s);
    const input = ringInputFromCapture(r.capture);
    // The calibrated skew, with the board profile's noise and overdrive charge (frame PD).
    const pd = client.profile.comparator!;
    expect(input.comparator).toEqual({
      skew_s: entry.skew_s, skew_u_s: entry.u_skew_s, skew_source: "calibration",
      noise_bw_hz: pd.noise_bw_hz, noise_v: pd.noise_v, overdrive_v_s: pd.overdrive_v_s, overdrive_u_v_s: 0.5 * pd.overdrive_v_s,
    });
    await client.close();
  });

  it("refuses a profile whose skew is beyond any comparator", () => {
    const p = { ...emptyProfile("5eed0001", new Date("2026-12-04T20:00:00Z")), skew: { skew_s: 2e-6, u_skew_s: 1e-9, method: "skew-fit", time: "2026-12-04T20:00:00Z", detail: "" } };
    expect(() => validateProfile(p)).toThrow(expect.objectContaining({ code: "PROFILE_INVALID" }));
  });
});
