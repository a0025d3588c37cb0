// Single pulses and their analysis, shared by fixed-setting readings and automatic ranging.

import type { RingAnalysis } from "../analysis/index.ts";
import { AnalysisError } from "../analysis/index.ts";
import { analyzeFit, fitRing, type FitState } from "../analysis/analyze-ring.ts";
import type { CaptureV1 } from "../capture/capture-file.ts";
import type { DeviceClient, MeasureSettings } from "../device/client.ts";
import type { RawCapture } from "../device/stream-reader.ts";
import { formatSi } from "../format/si.ts";
import { captureFromDevice, ringInputFromCapture } from "./capture-build.ts";
import { withFixtureCapacitance, withLeadNulling } from "../calibration/nulling-reading.ts";
import { withUnaccountedCapacitance } from "./reading-uncertainty.ts";
import type { MeasureOptions, Reading } from "./measure-part.ts";
import { CodedError } from "../coded-error.ts";
import { ReadingProgress, type MeasurePhase } from "./events.ts";
import { checkCapturePlausible, checkReadingPlausible, ImplausibleError } from "./plausibility.ts";

export class MeasureError extends CodedError {
  /** The capture that could not be analysed, when the error came from its analysis. */
  capture?: CaptureV1;
}

/**
 * Pulses once on the given settings and analyses the capture. `progress` is the reading's
 * progress and abort state (a bare string callback is accepted too).
 */
export async function readOnce(
  client: DeviceClient, settings: MeasureSettings, opts: MeasureOptions,
  progress: ReadingProgress | ((m: string) => void), phase: MeasurePhase = "fixed", fraction = 0.5,
): Promise<Reading> {
  const raw = await ReadingProgress.from(progress).pulse(client, settings, phase, fraction, `measuring: ${describeSetting(client, settings)}`);
  return readingFromRaw(client, raw, opts);
}

/** The capture record of a pulse's edges and its analysis (MeasureError when it has no usable ring). */
export function readingFromRaw(client: DeviceClient, raw: RawCapture, opts: Pick<MeasureOptions, "label" | "calibration">): Reading {
  const capture = captureFromDevice(raw, client.identity, client.profile, client.transport.description, opts.label, opts.calibration);
  return { capture, analysis: analyzeCapture(capture), settings: raw.settings };
}

/** Analysis of a capture, with ring-level failures turned into a user-facing MeasureError. */
export function analyzeCapture(capture: CaptureV1): RingAnalysis {
  return fitCapture(capture).analysis;
}

/**
 * The same with the fit behind it (residuals, model, edge use), for plots of the ring. A
 * MeasureError from here carries the capture, for the part-fault judgement and the record.
 */
export function fitCapture(capture: CaptureV1): { fit: FitState; analysis: RingAnalysis } {
  try {
    checkCapturePlausible(capture);
    const fit = fitRing(ringInputFromCapture(capture));
    const analysis = withLeadNulling(withFixtureCapacitance(withUnaccountedCapacitance(analyzeFit(fit), capture), capture), capture);
    checkReadingPlausible(capture, analysis);
    // Warnings the reading added when it was taken (automatic ranging's) come back with it.
    if (capture.reading_warnings?.length) analysis.warnings = [...analysis.warnings, ...capture.reading_warnings];
    return { fit, analysis };
  } catch (e) {
    const m = e instanceof AnalysisError || e instanceof ImplausibleError ? new MeasureError(e.code, e.message) : e;
    if (m instanceof MeasureError) m.capture ??= capture;
    throw m;
  }
}

/** Codes of a capture that held no usable ring (as opposed to a link or setting problem). */
export { NO_USABLE_RING } from "../codes.ts";

export function describeSetting(client: DeviceClient, s: { drive: number; tank: number; charge_us: number }): string {
  const r = client.profile.drives[s.drive].ohm;
  const c = client.profile.tanks[s.tank].nominal_f;
  return `drive ${formatSi(r, "Ω", 3)}, tank ${formatSi(c, "F", 3)}, charge ${s.charge_us} µs`;
}
