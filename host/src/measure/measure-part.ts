// One reading of the part on the clips: automatic ranging (auto-range.ts), or the caller's
// fixed setting after a safety check of its predicted ring; then pulse, verify the capture and
// analyse it.

import type { RingAnalysis } from "../analysis/index.ts";
import type { CaptureV1 } from "../capture/capture-file.ts";
import type { DeviceClient, MeasureSettings } from "../device/client.ts";
import type { Advice } from "../ranging/advice.ts";
import type { PartEstimate } from "../ranging/estimate.ts";
import type { PlanLimits } from "../ranging/predict.ts";
import { predictSetting, type SettingPrediction } from "../ranging/predict.ts";
import { resolvePeakLimit, volts } from "../ranging/safety.ts";
import { formatSi } from "../format/si.ts";
import type { ErrorCode } from "../codes.ts";
import { adviseSettings } from "../ranging/advice.ts";
import { describeFrequencyChoice, orderForFrequency, TEST_FREQUENCY_RANGE, type FrequencyChoice } from "../ranging/choose-setting.ts";
import { autoRange, probePart, quietAfterUs } from "./auto-range.ts";
import type { AppliedCalibration } from "../calibration/applied.ts";
import { MeasureError, NO_USABLE_RING, describeSetting, readingFromRaw } from "./read-once.ts";
import type { RawCapture } from "../device/stream-reader.ts";
import { explainFailure, finishReading, shortedPart, SHORT_MAX_L_H } from "./part-fault.ts";
import type { PartFault } from "./part-fault.ts";
import { MeasureAbortedError, ReadingProgress, type MeasureEvent } from "./events.ts";

export { MeasureError, analyzeCapture, describeSetting, readOnce } from "./read-once.ts";
export { PartFaultError, judgeCapture, judgeReading } from "./part-fault.ts";
export type { PartFault, PartFaultCode } from "./part-fault.ts";
export { MeasureAbortedError } from "./events.ts";
export type { CautionEvent, DoneEvent, MeasureEvent, MeasurePhase, PulseEvent, SettingInfo, StepEvent } from "./events.ts";

export interface MeasureOptions {
  /** Fixed drive-resistor index; with `tank`, skips ranging (the setting is still safety-checked). */
  drive?: number;
  tank?: number;
  charge_us?: number;
  /** Ring-peak limit, volts: default 30 V (or 80 % of the clamp); may be lowered, or raised up to the clamp. */
  max_peak_v?: number;
  /** Consent to a limit above the hazardous-live level (42.4 V peak). Default false. */
  hazardous_ok?: boolean;
  /**
   * The part is one winding of a transformer whose other winding has this many turns per pulsed
   * turn: it sees the pulse times this ratio, so every pulse is kept at max_peak_v / ratio.
   */
  other_winding_ratio?: number;
  /**
   * Working frequency asked for, Hz: ranging takes, among the settings that are safe and give a
   * usable ring, those on the tank whose predicted ring is nearest it (log distance), and the
   * reading's `test_frequency` says how near it came. With a fixed drive and tank, the reading
   * only says how near that setting is.
   */
  test_frequency_hz?: number;
  /** Called with each setting's prediction just before it is pulsed (not for the gentle probe). */
  onBeforePulse?: (p: SettingPrediction) => void;
  /** What is already known about the part (from an earlier reading): skips the probe. */
  estimate?: PartEstimate;
  label?: string;
  /** Applied to every capture of this reading (see calibration/); nominal values without it. */
  calibration?: AppliedCalibration;
  /** One line of text per step (probe, chosen setting, capture): each event's `message`. */
  onProgress?: (message: string) => void;
  /** The same progress as typed events (events.ts): phase, setting, pulse count, fraction done. */
  onEvent?: (e: MeasureEvent) => void;
  /**
   * Abandons the reading: no pulse starts after it fires, a capture in flight is stopped (the
   * tester is sent `AB`), and the call rejects with MeasureAbortedError (code ABORTED) once the
   * tester has stopped, leaving the client ready for the next reading.
   */
  signal?: AbortSignal;
  /**
   * Return a reading even when it shows a part fault (a clipped first cycle, a saturating core,
   * a chattering fixture, a ring that outlasts the window), marked `suspect`, instead of refusing
   * it with a PartFaultError. For experts who know what the number means. Default false.
   */
  keep_suspect?: boolean;
}

export interface Reading {
  capture: CaptureV1;
  analysis: RingAnalysis;
  settings: MeasureSettings;
  /** The prediction for the setting used, and the whole ranked advice it came from. */
  prediction?: Advice;
  advice?: Advice[];
  /** Present only with `test_frequency_hz`: the asked frequency, where the part rang and why no nearer tank was used. */
  test_frequency?: FrequencyChoice;
  /** Present only with `keep_suspect`: the part fault this reading shows; not a verified result. */
  suspect?: PartFault;
}


/** Inductor current at which a failed fixed setting is blamed on saturation first (an iron-powder core of a few tens of µH saturates from a few hundred mA). */
const STRONG_DRIVE_A = 0.1;
const FIXED_TIMEOUT_MS = 1000;

/**
 * One reading of the part on the clips. The reading it settles on is judged for part faults
 * (part-fault.ts): a fault is thrown as a PartFaultError (a MeasureError) with the diagnosis and
 * advice, unless `keep_suspect` asks for the reading marked suspect.
 */
export async function measurePart(client: DeviceClient, opts: MeasureOptions = {}): Promise<Reading> {
  const progress = new ReadingProgress(opts);
  try {
    progress.checkAborted();
    const reading = finishReading(await settle(client, opts, progress), client.profile, opts);
    progress.done(false);
    return reading;
  } catch (e) {
    if (!opts.signal?.aborted) {
      progress.done(false);
      throw e;
    }
    // Stopped at a pulse boundary: tell the tester unless the client did during the pulse.
    if (!progress.testerTold && progress.pulses > 0) await client.abort().catch(() => undefined);
    progress.done(true);
    throw new MeasureAbortedError();
  }
}

async function settle(client: DeviceClient, opts: MeasureOptions, progress: ReadingProgress): Promise<Reading> {
  const limits = planLimits(client, opts);
  if (opts.drive === undefined && opts.tank === undefined) return autoRange(client, limits, opts, progress);

  const plan = await planFixed(client, opts, limits, progress);
  opts.onBeforePulse?.(plan.prediction);
  const raw = await progress.pulse(client, plan.settings, "fixed", 0.5, `measuring: ${describeSetting(client, plan.settings)}`);
  return fixedReading(client, raw, opts, plan);
}

/** A fixed setting, checked against the limits, and the prediction it was checked with. */
export interface FixedPlan {
  settings: MeasureSettings;
  prediction: SettingPrediction;
  estimate: PartEstimate;
  limits: PlanLimits;
}

/**
 * The caller's fixed setting checked before it is pulsed: the same limits as ranging's, from
 * the estimate (or a gentle probe without one). Throws SETTING_UNSAFE / CHARGE_LIMIT.
 */
export async function planFixed(client: DeviceClient, opts: MeasureOptions, limits: PlanLimits, progress: ReadingProgress): Promise<FixedPlan> {
  const profile = client.profile;
  const drive = opts.drive ?? 0;
  const tank = opts.tank ?? profile.tanks.length - 1;
  checkIndex("drive", drive, profile.drives.length);
  checkIndex("tank", tank, profile.tanks.length);
  // A fixed setting is checked against the same limits before it is pulsed.
  const est = opts.estimate ?? (await probePart(client, progress, limits.max_peak_v));
  const p = predictSetting(profile, est, drive, tank, limits, opts.calibration?.tanks?.[tank]);
  if (p.a0_v * (p.i0_worst_a / p.i0_a) > limits.max_peak_v || p.resistor_avg_power_w > p.resistor_rating_w) {
    throw new MeasureError("SETTING_UNSAFE", `${describeSetting(client, { drive, tank, charge_us: p.charge_us })} is refused: ${p.refused || "over a limit"}; choose a larger drive resistor or a larger tank (or raise max_peak_v up to the clamp)`);
  }
  const charge = opts.charge_us ?? p.charge_us;
  if (charge > profile.drives[drive].max_charge_us) {
    throw new MeasureError("CHARGE_LIMIT", `the charge time ${charge} µs exceeds the drive resistor's ${profile.drives[drive].max_charge_us} µs interlock`);
  }
  // The capture ends 4 predicted periods after the last edge, as on a ranged setting: a fixed
  // quiet time would hold every reading of a fast ring that long after it died out.
  const settings = { drive, tank, charge_us: charge, edge_limit: profile.buffer_edges, timeout_ms: FIXED_TIMEOUT_MS, quiet_us: quietAfterUs(p.f_hz) };
  return { settings, prediction: p, estimate: est, limits };
}

/**
 * The reading of one fixed-setting capture, before the part-fault judgement: analysed, and a
 * capture without a usable ring explained (a short, a saturating core) where the plan shows why.
 */
export function fixedReading(client: DeviceClient, raw: RawCapture, opts: MeasureOptions, plan: FixedPlan): Reading {
  const { settings, prediction: p, estimate: est, limits } = plan;
  const asked = opts.test_frequency_hz;
  try {
    const reading = readingFromRaw(client, raw, opts);
    if (asked === undefined) return reading;
    const profile = client.profile;
    const advice = orderForFrequency(adviseSettings(profile, est, limits, opts.calibration?.tanks), asked);
    return { ...reading, test_frequency: describeFrequencyChoice(profile, advice, asked, settings.tank, reading.analysis.f0_hz, { untried: "the drive and tank were fixed for this reading" }) };
  } catch (e) {
    if (!(e instanceof MeasureError)) throw e;
    const why = explainFailure(e);
    if (why !== e) throw why;
    if (!est.fitted && est.l_h < SHORT_MAX_L_H && NO_USABLE_RING.includes(e.code)) throw shortedPart(est.l_h, `the capture on this setting gave no usable ring (${e.code})`);
    // A strong fixed drive that gives no ring on a part that rang in the probe: the likely cause is
    // a core driven into saturation, so the next step is less current, not more.
    if (NO_USABLE_RING.includes(e.code) && p.i0_a >= STRONG_DRIVE_A) {
      throw new MeasureError(e.code, `no usable ring on ${describeSetting(client, settings)}, though the part rang in the gentle probe: at about ${p.i0_a.toPrecision(2)} A a core can saturate, which stops the ring; use a larger drive resistor (less current) or leave the setting to automatic ranging (options drive, tank unset)`);
    }
    // The advice had already said this setting cannot give a usable ring for this part: that is
    // the cause, not the connection, and the next step is a setting the advice ranks.
    if (NO_USABLE_RING.includes(e.code) && p.refused !== "") throw unsuitedSetting(client, settings, p, e.code, adviseSettings(client.profile, est, limits, opts.calibration?.tanks));
    throw e;
  }
}

/**
 * A fixed setting the advice refused for this part (too few edges above the thresholds, edges
 * faster than the capture stores) gave no usable ring, as predicted. The code stays the
 * analysis's (a no-usable-ring code, on which callers such as the calibration procedures try
 * another setting); the message gives the cause and the setting to use instead.
 */
function unsuitedSetting(client: DeviceClient, settings: MeasureSettings, p: SettingPrediction, code: ErrorCode, advice: Advice[]): MeasureError {
  const best = advice.find((a) => a.refused === "");
  const profile = client.profile;
  const instead = best
    ? `drive ${best.drive} (${formatSi(profile.drives[best.drive].ohm, "Ω", 3)}) with tank ${best.tank} (${formatSi(profile.tanks[best.tank].nominal_f, "F", 3)}) is the advice's first choice`
    : "no setting suits the part within the limits";
  return new MeasureError(
    code,
    `no usable ring on ${describeSetting(client, settings)}, as the advice predicted for this part: ${p.refused.replace(/\.$/, "")}. The part and its connection are not the cause; ${instead}, or leave the setting to automatic ranging (options drive, tank unset)`,
  );
}

/** The peak limits of a reading's options (MeasureError PEAK_LIMIT when they contradict). */
export function planLimits(client: DeviceClient, opts: MeasureOptions): PlanLimits {
  const profile = client.profile;
  const peak = resolvePeakLimit(opts.max_peak_v, profile.clamp_v, opts.hazardous_ok ?? false, { other_winding_ratio: opts.other_winding_ratio });
  if (!peak.ok) throw new MeasureError("PEAK_LIMIT", peak.message);
  const asked = opts.test_frequency_hz;
  if (asked !== undefined && !(asked >= TEST_FREQUENCY_RANGE.min && asked <= TEST_FREQUENCY_RANGE.max)) {
    throw new RangeError(`"test_frequency_hz" must be from ${TEST_FREQUENCY_RANGE.min} to ${TEST_FREQUENCY_RANGE.max} Hz (${TEST_FREQUENCY_RANGE.what}), got ${asked}`);
  }
  return {
    max_peak_v: peak.limit_v, min_ticks_per_period: 40,
    ...(peak.limit_v < peak.winding_limit_v ? { why: `${volts(peak.winding_limit_v)} / ${peak.other_winding_ratio} for the other winding` } : {}),
  };
}

function checkIndex(name: string, v: number, n: number): void {
  if (!Number.isInteger(v) || v < 0 || v >= n) {
    throw new RangeError(`"${name}" must be an index from 0 to ${n - 1} (see "henrytick profile")`);
  }
}

