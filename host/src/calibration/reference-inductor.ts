// Calibration with a reference inductor of known value: on each tank the ring gives
// w0^2 = 1 / (L_ref C_eff), so C_eff = 1/(w0^2 L_ref), the effective capacitance across the part
// (tank, fixture, strays and the reference's own self-capacitance, which is then taken out
// when the user states it). The timer's error is carried into C_eff and cancels again in every
// later reading on this timebase (apply-profile.ts).

import type { SettingPrediction } from "../ranging/predict.ts";
import type { DeviceClient } from "../device/client.ts";
import type { AppliedCalibration } from "./applied.ts";
import type { Reading } from "../measure/measure-part.ts";
import { measurePart } from "../measure/measure-part.ts";
import { CalibrationError } from "./errors.ts";
import type { TankEntry } from "./profile-schema.ts";
import { PROFILE_TANK_TOLERANCE } from "../measure/plausibility.ts";
import { formatValue } from "../values/format-value.ts";
import { MIN_TICKS_PER_PERIOD, estimateOf, fitRelUF0, meanWithU, readOnTank } from "./tank-reading.ts";

export interface ReferenceInductor {
  inductance_h: number;
  /** Standard uncertainty of the reference's value (its certificate's U divided by its k). */
  u_inductance_h: number;
  /** The reference's own self-capacitance if known, F (default 0). */
  self_capacitance_f?: number;
  u_self_capacitance_f?: number;
  /** A name for the record, e.g. the reference's serial number. */
  label?: string;
}

export interface TankFromReference {
  tank: number;
  nominal_f: number;
  c_f: number;
  u_f: number;
  /** Relative part of u_f that comes from the reference's value (shared by all tanks). */
  shared_u_rel: number;
  /** Part of u_f from the reference's stated Cs: the same offset in every tank, F. */
  shared_offset_u_f: number;
  f0_hz: number;
  readings: number;
  drive: number;
}

/**
 * The reference's first (auto-ranged, uncalibrated) reading disagrees with its entered value by
 * more than this: no tank a profile accepts is further from nominal (PROFILE_TANK_TOLERANCE), so
 * the entered value (or the part on the clips) is wrong, and the procedure stops after one pulse.
 */
export const MAX_REFERENCE_DISAGREEMENT = PROFILE_TANK_TOLERANCE;

/** REFERENCE_MISMATCH with what was read, what was entered, and the likely intended value (a slipped prefix or code). */
export class ReferenceMismatchError extends CalibrationError {
  constructor(readonly reading_h: number, readonly entered_h: number, readonly likely_h: number | undefined, message: string) {
    super("REFERENCE_MISMATCH", message);
  }
}

/**
 * The likely intended reference value when the reading is a power of ten away from the entered
 * one (within MAX_REFERENCE_DISAGREEMENT): a prefix slip or a marking code read as a plain value.
 */
export function likelyReferenceValue(entered_h: number, reading_h: number): number | undefined {
  const k = Math.round(Math.log10(reading_h / entered_h));
  if (k === 0 || !Number.isFinite(k)) return undefined;
  const likely = entered_h * 10 ** k;
  return Math.abs(reading_h / likely - 1) <= MAX_REFERENCE_DISAGREEMENT ? Number(likely.toPrecision(12)) : undefined;
}

/** Throws REFERENCE_MISMATCH when the first reading is too far from the entered value. */
export function checkFirstReading(ref: ReferenceInductor, reading_h: number): void {
  if (Math.abs(reading_h / ref.inductance_h - 1) <= MAX_REFERENCE_DISAGREEMENT) return;
  const likely = likelyReferenceValue(ref.inductance_h, reading_h);
  throw new ReferenceMismatchError(
    reading_h, ref.inductance_h, likely,
    `the reference reads ${formatValue(reading_h, "H", 4)} on its first ring, ${formatValue(ref.inductance_h, "H", 4)} was entered: more than the ±${MAX_REFERENCE_DISAGREEMENT * 100} % any tank tolerance explains. ` +
      `Nothing is stored. ${likely !== undefined ? `The reference is probably ${formatValue(likely, "H", 4)}: enter that value` : "Check the entered value and its unit, and that the reference (not another part) is on the clips"}, then calibrate again`,
  );
}

export function checkReference(ref: ReferenceInductor): void {
  if (!(ref.inductance_h > 0) || !Number.isFinite(ref.inductance_h)) {
    throw new CalibrationError("BAD_REFERENCE", `the reference inductance must be a positive number of henries, got ${formatValue(ref.inductance_h, "H")}; give its certified value`);
  }
  if (!(ref.u_inductance_h > 0) || ref.u_inductance_h > 0.05 * ref.inductance_h) {
    throw new CalibrationError("BAD_REFERENCE", `the reference's standard uncertainty must be positive and at most 5 % of its value, got ${formatValue(ref.u_inductance_h, "H")}; a worse reference cannot calibrate a ±1 % tank`);
  }
  const cs = ref.self_capacitance_f ?? 0;
  if (cs < 0 || (ref.u_self_capacitance_f ?? 0) < 0) throw new CalibrationError("BAD_REFERENCE", "the reference's self-capacitance and its uncertainty must not be negative");
}

/** Whether the reference rings on a tank at all: enough timer ticks per period (the fit's floor). */
export function referenceSpanProblem(l_h: number, nominal_f: number, tick_hz: number): string | null {
  const f = 1 / (2 * Math.PI * Math.sqrt(l_h * nominal_f));
  const tpp = tick_hz / f;
  if (tpp < MIN_TICKS_PER_PERIOD) return `it would ring at ${(f / 1e3).toFixed(0)} kHz, only ${tpp.toFixed(0)} timer ticks per period (at least ${MIN_TICKS_PER_PERIOD} needed)`;
  return null;
}

/**
 * Pure core: the effective capacitance from repeat readings on one tank. Each reading's
 * L_app = 1/(w0^2 C_used) (the capacitance the capture was analysed with) gives w0.
 */
export function tankFromReadings(tank: number, nominal_f: number, readings: { f0_hz: number; fit_rel_u_f: number; drive: number }[], ref: ReferenceInductor): TankFromReference {
  checkReference(ref);
  const cs = ref.self_capacitance_f ?? 0;
  const c = readings.map((r) => 1 / ((2 * Math.PI * r.f0_hz) ** 2 * ref.inductance_h) - cs);
  // u(C)/C from the ring is 2 u(f)/f per reading.
  const m = meanWithU(c, readings.map((r, i) => 2 * r.fit_rel_u_f * c[i]));
  if (!(m.mean > 0)) {
    throw new CalibrationError("NONSENSE_RESULT", `tank ${tank}: the reference gives a negative capacitance (${formatValue(m.mean, "F")}); check the reference value and its self-capacitance, then calibrate again`);
  }
  if (m.mean < 0.5 * nominal_f || m.mean > 2 * nominal_f) {
    throw new CalibrationError("NONSENSE_RESULT", `tank ${tank}: the reference gives ${formatValue(m.mean, "F")} against a nominal ${formatValue(nominal_f, "F")}; the reference value (or its unit) is probably wrong`);
  }
  const sharedRel = ref.u_inductance_h / ref.inductance_h; // C ∝ 1/L_ref
  const u = Math.hypot(m.u, sharedRel * m.mean, ref.u_self_capacitance_f ?? 0);
  return { tank, nominal_f, c_f: m.mean, u_f: u, shared_u_rel: sharedRel, shared_offset_u_f: ref.u_self_capacitance_f ?? 0, f0_hz: readings[0].f0_hz, readings: readings.length, drive: readings[0].drive };
}

/** w0 of the ring from a reading: the analysis reports L = 1/(w0^2 C_used). */
export function f0FromReading(r: Reading): number {
  return r.analysis.f0_hz;
}

export interface ReferenceOptions {
  tanks?: number[];
  repeats?: number;
  /** Thresholds and timebase already calibrated (tanks in it are ignored here). */
  calibration?: AppliedCalibration;
  /** Timebase correction in force, recorded with each tank. */
  timebase_ppm?: number;
  onProgress?: (message: string) => void;
  /** Called with each pulse's prediction before it is made (the CLI's caution for a high ring). */
  onBeforePulse?: (p: SettingPrediction) => void;
  now?: () => Date;
  /**
   * True when the reference sits on the board's own terminals, without the clips and leads: the
   * tanks' values then lack the fixture, which readings add from the profile's fixture entry
   * (entries record `fixture_included: false`). Default: the reference is on the clips.
   */
  on_terminals?: boolean;
}

export interface ReferenceOutcome {
  entries: TankEntry[];
  results: TankFromReference[];
  skipped: { tank: number; reason: string }[];
}

/** Runs the procedure on the tester: the reference inductor must be on the clips. */
export async function calibrateWithReference(client: DeviceClient, ref: ReferenceInductor, opts: ReferenceOptions = {}): Promise<ReferenceOutcome> {
  checkReference(ref);
  const profile = client.profile;
  const wanted = opts.tanks ?? profile.tanks.map((t) => t.index);
  const repeats = opts.repeats ?? 3;
  // Tank values are what this procedure measures: none is applied, nor a fixture added to them.
  const base: AppliedCalibration | undefined = opts.calibration ? { ...opts.calibration, tanks: undefined, fixture: undefined } : undefined;
  const out: ReferenceOutcome = { entries: [], results: [], skipped: [] };
  // One auto-ranged reading first: its drive is the natural first choice on every tank.
  const auto = await measurePart(client, { calibration: base, onProgress: opts.onProgress, onBeforePulse: opts.onBeforePulse });
  checkFirstReading(ref, auto.analysis.inductance_h);
  let prefer: number | undefined = auto.settings.drive;
  const estimate = estimateOf(client, auto);
  for (const tank of wanted) {
    const nominal = profile.tanks[tank]?.nominal_f;
    if (nominal === undefined) throw new RangeError(`tank ${tank} does not exist on this tester (0..${profile.tanks.length - 1})`);
    const span = referenceSpanProblem(ref.inductance_h, nominal, profile.tick_hz);
    if (span) {
      out.skipped.push({ tank, reason: `outside the tank's usable span: ${span}` });
      continue;
    }
    const readings: { f0_hz: number; fit_rel_u_f: number; drive: number }[] = [];
    try {
      for (let k = 0; k < repeats; k++) {
        const r = await readOnTank(client, tank, { calibration: base, preferDrive: prefer, onProgress: opts.onProgress, label: ref.label, estimate, onBeforePulse: opts.onBeforePulse });
        prefer = r.settings.drive;
        readings.push({ f0_hz: f0FromReading(r), fit_rel_u_f: fitRelUF0(r), drive: r.settings.drive });
      }
    } catch (e) {
      if (e instanceof CalibrationError && e.code === "OUT_OF_SPAN") {
        out.skipped.push({ tank, reason: e.message });
        continue;
      }
      throw e;
    }
    const res = tankFromReadings(tank, nominal, readings, ref);
    out.results.push(res);
    out.entries.push({
      index: tank, nominal_f: nominal, c_f: res.c_f, u_f: res.u_f, shared_u_rel: res.shared_u_rel, shared_offset_u_f: res.shared_offset_u_f,
      timebase_ppm: opts.timebase_ppm ?? 0, drive: res.drive, fixture_included: opts.on_terminals !== true, method: "reference-inductor", time: (opts.now ?? (() => new Date()))().toISOString(),
      detail: `reference ${ref.label ?? ""} ${formatValue(ref.inductance_h, "H", 6)} ± ${formatValue(ref.u_inductance_h, "H", 3)} (k = 1)`.replace(/\s+/g, " ") +
        `, Cs ${formatValue(ref.self_capacitance_f ?? 0, "F", 3)}; ${res.readings} rings at ${formatValue(res.f0_hz, "Hz", 7)} on drive ${res.drive}`,
    });
  }
  if (out.entries.length === 0) {
    throw new CalibrationError("OUT_OF_SPAN", `the reference suits none of the tanks asked for (${out.skipped.map((s) => `tank ${s.tank}: ${s.reason}`).join("; ")}); use a reference that rings on them`);
  }
  return out;
}
