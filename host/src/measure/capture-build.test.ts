// What a reading records of its comparator's timing (capture-build.ts), from the board profile
// (frame PD) and the calibration, and what the analysis then gets from the record.

import { describe, expect, it } from "vitest";
import type { CaptureV1 } from "../capture/capture-file.ts";
import type { ComparatorBoardTiming, DeviceProfile } from "../device/profile.ts";
import { comparatorRecord, comparatorTimingFromCapture } from "./capture-build.ts";

const board: ComparatorBoardTiming = { noise_v: 0.6e-3, noise_bw_hz: 2e6, delay_rise_s: 50e-9, delay_fall_s: 45e-9, skew_u_s: 20e-9, overdrive_v_s: 2e-12 };
const profileWith = (comparator?: ComparatorBoardTiming) => ({ comparator }) as DeviceProfile;

describe("the comparator record of a capture", () => {
  it("from the board profile: its skew (rise minus fall) taken as exact, its noise and overdrive charge", () => {
    const r = comparatorRecord(profileWith(board)).comparator!;
    expect(r.skew_s).toBeCloseTo(5e-9, 20);
    expect(r).toMatchObject({ skew_u_s: 0, skew_source: "board profile", noise_bw_hz: 2e6, noise_v: 0.6e-3, noise_source: "board profile", overdrive_v_s: 2e-12, overdrive_u_v_s: 1e-12 });
  });

  it("a calibrated skew replaces the board's; a board without a noise figure leaves the fit's to stand in", () => {
    const r = comparatorRecord(profileWith({ ...board, noise_v: 0, overdrive_v_s: 0 }), { source: "test", comparator_skew: { skew_s: 12e-9, u_s: 1e-9 } }).comparator!;
    expect(r).toEqual({ skew_s: 12e-9, skew_u_s: 1e-9, skew_source: "calibration", noise_bw_hz: 2e6, noise_source: "fit" });
    expect(comparatorTimingFromCapture({ comparator: r } as CaptureV1)).toEqual({ skew_s: 12e-9, skew_u_s: 1e-9, skew_source: "calibration", noise_bw_hz: 2e6 });
  });

  it("nothing from older firmware without a calibration; an older file's calibrated skew still applies", () => {
    expect(comparatorRecord(profileWith(undefined))).toEqual({});
    const old = { calibration: { comparator_skew_s: 7e-9, comparator_skew_u_s: 2e-9 } } as CaptureV1;
    expect(comparatorTimingFromCapture(old)).toEqual({ skew_s: 7e-9, skew_u_s: 2e-9, skew_source: "calibration" });
    expect(comparatorTimingFromCapture({} as CaptureV1)).toBeUndefined();
  });
});
