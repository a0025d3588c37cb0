// The change check's limits on invented entries (pure arithmetic of calibration-change.ts).
import { describe, expect, it } from "vitest";
import { calibrationChanges, describeChanges } from "./calibration-change.ts";
import type { TankEntry } from "./profile-schema.ts";

const entry = (index: number, nominal_f: number, c_f: number, u_f: number): TankEntry => ({
  index, nominal_f, c_f, u_f, shared_u_rel: 0, timebase_ppm: 0, method: "reference-inductor", time: "2026-12-04T20:00:00Z", detail: "",
});

describe("calibrationChanges", () => {
  it("against the previous calibration: k = 3 times the uncertainty of the difference", () => {
    const prev = [entry(2, 100e-9, 100.4e-9, 30e-12)];
    const limit = (3 * Math.hypot(30e-12, 40e-12)) / 100.4e-9; // 0.149 %
    const [small] = calibrationChanges([entry(2, 100e-9, 100.4e-9 * (1 + 0.9 * limit), 40e-12)], prev, 0);
    expect(small.against).toBe("previous");
    expect(small.limit_rel).toBeCloseTo(limit, 12);
    expect(small.large).toBe(false);
    const [big] = calibrationChanges([entry(2, 100e-9, 100.4e-9 * (1 - 1.1 * limit), 40e-12)], prev, 0);
    expect(big.large).toBe(true);
    expect(describeChanges([big])).toMatch(/^tank 2 −0\.16 % from its previous calibration \(limit ±0\.15 %\)$/);
  });

  it("against nominal when never calibrated: the 1 % tolerance plus 3 u of the value and the strays (10 pF each)", () => {
    const limit = 0.01 + (3 * Math.hypot(6e-12, 10e-12, 10e-12)) / 10e-9;
    const [c] = calibrationChanges([entry(1, 10e-9, 10e-9 * (1 - 1.01 * limit), 6e-12)], [], 0);
    expect(c.against).toBe("nominal");
    expect(c.limit_rel).toBeCloseTo(limit, 12);
    expect(c.large).toBe(true);
    // The 1 nF tank on the reference board: +2.8 % from its strays alone is within its wider limit.
    expect(calibrationChanges([entry(0, 1e-9, 1.028e-9, 0.3e-12)], [], 0)[0].large).toBe(false);
  });

  it("compares both entries as applied today: a reference calibration taken under another timebase correction is rescaled first", () => {
    const prev = { ...entry(3, 1e-6, 0.9962e-6, 0.3e-9), timebase_ppm: 0 };
    // The same ring read with a +100 ppm correction in force gives C (1 + 0)^2/(1 + 100e-6)^2.
    const now = { ...entry(3, 1e-6, 0.9962e-6 / (1 + 100e-6) ** 2, 0.3e-9), timebase_ppm: 100 };
    const [c] = calibrationChanges([now], [prev], 100);
    expect(c.change_rel).toBeCloseTo(0, 12);
  });
});
