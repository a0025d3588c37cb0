// A reading with everything a bench app shows beside it: the result record, the uncertainty
// budget of its inductance (one tank, with what the calibration profile knows of the timebase),
// and on request the two-tank reading that removes the part's self-capacitance (a second
// measurement on a neighbouring tank), whose budget then replaces the one-tank budget. The
// command line's `measure --budget / --self-cap` prints exactly this; another app gets the same
// figures from the same call.

import type { DeviceClient } from "../device/client.ts";
import type { CalibrationProfile } from "../calibration/profile-schema.ts";
import { timebaseKnowledge } from "../calibration/apply-profile.ts";
import { CalibrationError } from "../calibration/errors.ts";
import { measureSelfCapacitance, type SelfCapacitanceReading } from "../calibration/self-capacitance-reading.ts";
import { singleTankBudget, type UncertaintyBudget } from "../calibration/uncertainty-budget.ts";
import { measurePart, type MeasureOptions, type Reading } from "./measure-part.ts";
import { readingResult, type ResultJson } from "./result.ts";

export interface ReadingReportOptions {
  /** The calibration profile the reading was taken with (its timebase and tank entries); null when uncalibrated. */
  profile?: CalibrationProfile | null;
  /** Also read on a second tank and correct L for the part's self-capacitance. */
  self_capacitance?: boolean;
  /** Passed on to the second measurement. */
  calibration?: MeasureOptions["calibration"];
  label?: string;
  onProgress?: (message: string) => void;
}

/** The two-tank figures as JSON, expanded uncertainties (k = 2). */
export interface SelfCapacitanceJson {
  inductance_h: number;
  inductance_u_h: number;
  self_capacitance_f: number;
  self_capacitance_u_f: number;
  /** False when the two tanks give no value above zero ("not determined"). */
  self_capacitance_determined: boolean;
  srf_hz: number | null;
  srf_u_hz: number | null;
  coverage_factor: 2;
  cs_per_percent_f: { small_f: number; large_f: number };
  tanks: [number, number];
}

export interface ReadingReport {
  reading: Reading;
  result: ResultJson;
  /** Budget of the inductance: one tank, or the corrected L's when the two-tank reading succeeded. */
  budget: UncertaintyBudget;
  self_capacitance?: SelfCapacitanceReading;
  /** Why the two-tank reading was not possible (the one-tank reading stands). */
  self_capacitance_error?: { code: string; message: string };
}

/** The budget of a one-tank reading, with what the profile knows of the timebase of its tank. */
export function readingBudget(reading: Reading, profile: CalibrationProfile | null | undefined): UncertaintyBudget {
  return singleTankBudget(reading.analysis, reading.capture.tank_c_f, timebaseKnowledge(profile ?? null, reading.settings.tank));
}

/** Result, budget and (on request) the two-tank correction for a reading already taken. */
export async function reportReading(client: DeviceClient, reading: Reading, opts: ReadingReportOptions = {}): Promise<ReadingReport> {
  const out: ReadingReport = { reading, result: readingResult(reading), budget: readingBudget(reading, opts.profile) };
  if (!opts.self_capacitance) return out;
  try {
    const sc = await measureSelfCapacitance(client, { profile: opts.profile, calibration: opts.calibration, first: reading, label: opts.label, onProgress: opts.onProgress });
    return { ...out, self_capacitance: sc, budget: sc.budget };
  } catch (e) {
    if (!(e instanceof CalibrationError)) throw e;
    return { ...out, self_capacitance_error: { code: e.code, message: e.message } };
  }
}

/** measurePart, then reportReading: one call for a reading with its budget. */
export async function measureWithReport(client: DeviceClient, opts: MeasureOptions & Omit<ReadingReportOptions, "calibration" | "label" | "onProgress"> = {}): Promise<ReadingReport> {
  const { profile, self_capacitance, ...measure } = opts;
  const reading = await measurePart(client, measure);
  return reportReading(client, reading, { profile, self_capacitance, calibration: measure.calibration, label: measure.label, onProgress: measure.onProgress });
}

/** The two-tank reading as JSON (what `measure --self-cap --json` prints under self_capacitance). */
export function selfCapacitanceJson(sc: SelfCapacitanceReading): SelfCapacitanceJson {
  const r = sc.result;
  return {
    inductance_h: r.inductance_h, inductance_u_h: 2 * r.u.inductance_h,
    self_capacitance_f: r.self_capacitance_f, self_capacitance_u_f: 2 * r.u.self_capacitance_f,
    self_capacitance_determined: r.self_capacitance_f > 0,
    srf_hz: r.srf_hz, srf_u_hz: r.u.srf_hz === null ? null : 2 * r.u.srf_hz,
    coverage_factor: 2,
    cs_per_percent_f: r.cs_per_percent,
    tanks: [sc.first.settings.tank, sc.second.settings.tank],
  };
}
