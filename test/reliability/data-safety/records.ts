// The records the kill test writes, each a pure function of its number, so that the parent can
// check every record it finds against what the child must have written.

import type { CaptureV1 } from "../../../host/src/capture/capture-file.ts";
import type { CalibrationProfile } from "../../../host/src/calibration/profile-schema.ts";
import type { PartRecord } from "../../../host/src/workflows/sort-session.ts";

export const DEVICE_ID = "HT-KILLTEST";
/** Capture files rotate over this many names, so most writes replace an existing file. */
export const CAPTURE_SLOTS = 4;

export function captureFor(k: number): CaptureV1 {
  const edges: [number, number][] = [];
  // A few hundred edges: big enough that a write takes more than one page.
  for (let i = 0; i < 300 + (k % 50); i++) edges.push([1000 + i * 731 + k, (i + 1) % 2]);
  return {
    format: "henrytick-capture", version: 1, tick_hz: 64e6, tank_c_f: 1e-8, thresholds_v: [0.035, -0.005],
    meta: { label: `record ${k}` }, edges,
  };
}

export function profileFor(k: number): CalibrationProfile {
  const time = new Date(Date.UTC(2026, 0, 1) + k * 1000).toISOString();
  return {
    format: "henrytick-calibration", version: 1, device_id: DEVICE_ID, updated: time,
    tanks: [{ index: 1, nominal_f: 1e-8, c_f: 1e-8 * (1 + k * 1e-6), u_f: 1e-11, shared_u_rel: 0, timebase_ppm: 0, method: "entered", time, detail: `record ${k}` }],
  };
}

export function partRecordFor(k: number): PartRecord {
  return {
    part: k, time: new Date(Date.UTC(2026, 0, 1) + k * 1000).toISOString(), lot: "kill-test", label: `coil, "batch" ${k}`,
    inductance_h: 1e-3 * (1 + k * 1e-4), inductance_u_h: 1e-5, decision: "conforming", p_conform: 0.99, lower_h: 9e-4, upper_h: 1.1e-3,
    bin: "A", bin_certain: true, preferred_h: 1e-3, q: 40 + k, esr_ohm: 0.5, warnings: [], drive_index: 2, tank_index: 1, charge_us: 1000,
    tank_c_f: 1e-8, tank_calibrated: false,
  };
}
