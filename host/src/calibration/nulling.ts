// Lead nulling: the test leads and clips add their own series inductance to every reading
// (some 20–50 nH for a pair of 15 cm clip leads: common bench practice, no source), 2.5 % of a
// 1.2 µH coil. With the clips shorted together, what rings is the leads alone; that value is
// stored in the profile and subtracted from every later reading, its uncertainty carried in the
// reading's U and budget.
//
// The leads' ring is far below the range (30 nH rings at 2.9 MHz on the 100 nF tank: 22 timer
// ticks per period, Q about 26 through 20 mΩ of clip), faster than automatic ranging accepts
// (40 ticks per period); on the 1 µF tank its Q is below 10 and it dies within a few edges. So
// the procedure picks fixed settings itself: the strongest drive on each tank, from the largest
// tank down, and keeps the first that gives a fitted ring. The subtraction is in nulling-reading.ts.

import { COVERAGE_K } from "../analysis/index.ts";
import type { DeviceClient } from "../device/client.ts";
import { formatSi } from "../format/si.ts";
import { measurePart, type Reading } from "../measure/measure-part.ts";
import { MeasureError } from "../measure/read-once.ts";
import type { AppliedCalibration } from "./applied.ts";
import { CalibrationError } from "./errors.ts";
import { MAX_LEAD_H, type LeadEntry } from "./profile-schema.ts";

export interface LeadNullingOptions {
  /** Rings to average (default 3). */
  repeats?: number;
  /** The tester's calibration; a stored lead value in it is left out (this procedure replaces it). */
  calibration?: AppliedCalibration;
  onProgress?: (message: string) => void;
  /** Provenance time (default now). */
  now?: Date;
}

export interface LeadNullingResult {
  entry: LeadEntry;
  /** The setting used and the individual values. */
  drive: number;
  tank: number;
  f0_hz: number;
  readings_h: number[];
}

/** Fewest fitted edges a lead ring must give to be used. */
const MIN_LEAD_EDGES = 12;

/**
 * Rings the shorted clips and returns the leads' inductance with its standard uncertainty: the
 * larger of the fits' own figure and the scatter of the repeats, over √n, combined with the
 * tank capacitance's relative uncertainty (L = 1/(w² C)). Refused when nothing rings
 * (`OUT_OF_SPAN`) or the value is above MAX_LEAD_H (`NONSENSE_RESULT`: the clips are not shorted).
 */
export async function measureLeadInductance(client: DeviceClient, opts: LeadNullingOptions = {}): Promise<LeadNullingResult> {
  const repeats = opts.repeats ?? 3;
  const calibration = opts.calibration ? { ...opts.calibration, leads: undefined } : undefined;
  const profile = client.profile;
  const tanks = profile.tanks.map((t) => t.index).sort((a, b) => profile.tanks[b].nominal_f - profile.tanks[a].nominal_f);
  const drive = profile.drives.map((d) => d.index).sort((a, b) => profile.drives[a].ohm - profile.drives[b].ohm)[0];
  const tried: string[] = [];
  for (const tank of tanks) {
    const readings: Reading[] = [];
    for (let i = 0; i < repeats; i++) {
      let r: Reading;
      try {
        r = await measurePart(client, { drive, tank, calibration, keep_suspect: true });
      } catch (e) {
        if (!(e instanceof MeasureError)) throw e;
        tried.push(`${formatSi(profile.tanks[tank].nominal_f, "F", 3)}: ${e.code}`);
        break;
      }
      if (r.analysis.edges_used < MIN_LEAD_EDGES) {
        tried.push(`${formatSi(profile.tanks[tank].nominal_f, "F", 3)}: ${r.analysis.edges_used} edges`);
        break;
      }
      readings.push(r);
      opts.onProgress?.(`ring ${i + 1} of ${repeats} on the ${formatSi(profile.tanks[tank].nominal_f, "F", 3)} tank: ${formatSi(r.analysis.inductance_h, "H", 4)}`);
    }
    if (readings.length < repeats) continue;
    const values = readings.map((r) => r.analysis.inductance_h);
    const n = values.length;
    const mean = values.reduce((s, v) => s + v, 0) / n;
    const sd = n > 1 ? Math.sqrt(values.reduce((s, v) => s + (v - mean) ** 2, 0) / (n - 1)) : 0;
    // The fits' own figure (standard), without the single-tank self-capacitance allowance a part gets.
    const fitU = Math.sqrt(readings.reduce((s, r) => s + (r.analysis.inductance_u_h / COVERAGE_K) ** 2, 0) / n);
    const ringU = Math.max(fitU, sd) / Math.sqrt(n);
    const c = readings[0].capture;
    const cRel = (c.tank_c_u_f ?? 0) / c.tank_c_f;
    const u = Math.hypot(ringU, cRel * mean);
    if (!(mean > 0) || mean > MAX_LEAD_H) {
      throw new CalibrationError("NONSENSE_RESULT", `the clips read ${formatSi(mean, "H", 3)}, more than shorted leads show (at most ${formatSi(MAX_LEAD_H, "H", 2)}): short the two clips directly to each other, with nothing else on them, and run the procedure again`);
    }
    const f0 = readings.reduce((s, r) => s + r.analysis.f0_hz, 0) / n;
    const entry: LeadEntry = {
      l_h: mean, u_h: u, method: "clips-shorted", time: (opts.now ?? new Date()).toISOString(),
      detail: `${n} rings of the shorted clips at ${formatSi(f0, "Hz", 4)} (drive ${formatSi(profile.drives[drive].ohm, "Ω", 3)}, tank ${formatSi(profile.tanks[tank].nominal_f, "F", 3)}), scatter ${formatSi(sd, "H", 2)}`,
    };
    return { entry, drive, tank, f0_hz: f0, readings_h: values };
  }
  throw new CalibrationError(
    "OUT_OF_SPAN",
    `the shorted clips gave no usable ring on any tank (${tried.join("; ")}): short the clips firmly to each other (metal to metal, not through a part) and run the procedure again`,
  );
}
