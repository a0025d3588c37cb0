// Physical plausibility of a capture and of the reading made from it, judged against what the
// capture (or the tester) itself states, so that a damaged or doctored file is refused with a code
// instead of giving a confident wrong number. Checked before the fit (the capture's own facts) and
// after it (the reading against the drive, the clamp and the timer). Pure.
//
// The limits:
// - edge levels alternate: a comparator with hysteresis can only toggle, so two like levels in a
//   row mean a damaged record (all levels 1 made an 82.85 µH reading of a 331.5 µH part);
// - tick_hz is the nominal rate corrected by the stated timebase error (tick_hz = nominal (1 + ppm
//   1e-6)), and that error is within ±1000 ppm, the limit the timebase calibration itself accepts
//   (docs/calibration.md: beyond any working crystal);
// - tank_c_f is within a factor 2 of the stated nominal (the calibration profile's own mix-up
//   rule), and equal to it when the tank is stated uncalibrated;
// - physical ranges no tester of this kind leaves: a timer from 10 kHz to 10 GHz, a tank from 1 pF
//   to 10 mF, thresholds within ±1 kV, at most MAX_CAPTURE_EDGES edges;
// - the ring cannot start higher than the charge current allows: an inductor carrying at most
//   I = supply / series resistor rings on C with an initial slope I/C, so A0 <= I / (C wd); twice
//   that is allowed (front-end ESR and the fit's extrapolation to t = 0; the demo parts stay under
//   1.1, see test/reliability/hostile-numbers.test.ts); and no higher than 1.5 times the front end's
//   clamp when the capture states it;
// - the reading is one the timer could resolve: at least 4 ticks per period, L from 1 nH to 10 kH.

import type { RingAnalysis } from "../analysis/types.ts";
import { MAX_CAPTURE_EDGES, type CaptureV1 } from "../capture/capture-file.ts";
import type { CalibrationProfile } from "../calibration/profile-schema.ts";
import { CalibrationError } from "../calibration/errors.ts";
import { CodedError } from "../coded-error.ts";
import type { DeviceProfile } from "../device/profile.ts";
import { formatSi } from "../format/si.ts";
import { edgesOf } from "../capture/edge-list.ts";

/** Largest timer error accepted, ppm (as the timebase calibration: docs/calibration.md). */
export const MAX_TIMEBASE_PPM = 1000;
export const TICK_HZ_RANGE: [number, number] = [1e4, 1e10];
export const TANK_F_RANGE: [number, number] = [1e-12, 1e-2];
export const MAX_THRESHOLD_V = 1000;
/** A0 may exceed I/(C wd) by this factor at most. */
export const AMPLITUDE_MARGIN = 2;
/** A0 may exceed a stated clamp by this factor at most (a fitted envelope extrapolated to t = 0). */
export const CLAMP_MARGIN = 1.5;
export const MIN_TICKS_PER_PERIOD = 4;
export const INDUCTANCE_RANGE_H: [number, number] = [1e-9, 1e4];

export type ImplausibleCode =
  | "EDGES_NOT_ALTERNATING" | "TOO_MANY_EDGES" | "TICK_RATE_MISMATCH" | "TICK_RATE_IMPLAUSIBLE"
  | "TANK_IMPLAUSIBLE" | "THRESHOLDS_IMPLAUSIBLE" | "RING_AMPLITUDE_IMPLAUSIBLE" | "RESULT_OUT_OF_RANGE";

/** A capture or reading that cannot be physical (fitCapture passes it on as a MeasureError). */
export class ImplausibleError extends CodedError<ImplausibleCode> {}

const ADVICE = "the capture is damaged or was edited; measure the part again";

function refuse(code: ImplausibleCode, what: string, advice = ADVICE): never {
  throw new ImplausibleError(code, `${what}; ${advice}`);
}

/** Checks a capture's own statements before it is fitted. Throws ImplausibleError. */
export function checkCapturePlausible(c: CaptureV1): void {
  const n = c.edges.length;
  if (n > MAX_CAPTURE_EDGES) refuse("TOO_MANY_EDGES", `${n} edges is more than a capture holds (at most ${MAX_CAPTURE_EDGES})`);
  if (c.range && Number.isFinite(c.range.edge_limit) && n > c.range.edge_limit) {
    refuse("TOO_MANY_EDGES", `${n} edges, but the capture says the tester was asked for at most ${c.range.edge_limit}`);
  }
  const list = edgesOf(c);
  const levelAt = list ? (i: number) => list.levels[i] : (i: number) => c.edges[i][1];
  for (let i = 1; i < n; i++) {
    if (levelAt(i) === levelAt(i - 1)) {
      refuse("EDGES_NOT_ALTERNATING", `edges ${i - 1} and ${i} both leave the comparator at level ${levelAt(i)}; a comparator can only toggle`);
    }
  }
  if (!(c.tick_hz >= TICK_HZ_RANGE[0] && c.tick_hz <= TICK_HZ_RANGE[1])) {
    refuse("TICK_RATE_IMPLAUSIBLE", `a timer of ${formatSi(c.tick_hz, "Hz", 4)} is outside any tester's (${formatSi(TICK_HZ_RANGE[0], "Hz")} to ${formatSi(TICK_HZ_RANGE[1], "Hz")})`);
  }
  const cal = c.calibration;
  if (cal && Number.isFinite(cal.nominal_tick_hz) && cal.nominal_tick_hz > 0) {
    const ppm = Number.isFinite(cal.timebase_ppm) ? cal.timebase_ppm : 0;
    if (Math.abs(ppm) > MAX_TIMEBASE_PPM) {
      refuse("TICK_RATE_IMPLAUSIBLE", `the stated timebase error of ${ppm} ppm is beyond any working crystal (±${MAX_TIMEBASE_PPM} ppm)`, "calibrate the timebase again, then measure again");
    }
    const expected = cal.nominal_tick_hz * (1 + ppm * 1e-6);
    const off_ppm = (c.tick_hz / expected - 1) * 1e6;
    if (Math.abs(off_ppm) > 0.01) {
      refuse("TICK_RATE_MISMATCH", `tick_hz ${c.tick_hz} Hz contradicts the capture's own nominal ${cal.nominal_tick_hz} Hz corrected by ${ppm} ppm (${expected} Hz): ${off_ppm > 0 ? "+" : ""}${off_ppm.toFixed(1)} ppm off`);
    }
  }
  if (!(c.tank_c_f >= TANK_F_RANGE[0] && c.tank_c_f <= TANK_F_RANGE[1])) {
    refuse("TANK_IMPLAUSIBLE", `a tank of ${formatSi(c.tank_c_f, "F", 4)} is outside any tester's (${formatSi(TANK_F_RANGE[0], "F")} to ${formatSi(TANK_F_RANGE[1], "F")})`);
  }
  if (cal && Number.isFinite(cal.nominal_tank_c_f) && cal.nominal_tank_c_f > 0) {
    const r = c.tank_c_f / cal.nominal_tank_c_f;
    // An uncalibrated tank is its nominal value, plus the nulled fixture's capacitance when one was added.
    const uncalibrated = cal.nominal_tank_c_f + (cal.fixture_capacitance_f ?? 0);
    if (cal.tank_calibrated === false && Math.abs(c.tank_c_f / uncalibrated - 1) > 1e-9) {
      refuse("TANK_IMPLAUSIBLE", `tank_c_f ${formatSi(c.tank_c_f, "F", 4)} differs from the nominal ${formatSi(cal.nominal_tank_c_f, "F", 4)}${cal.fixture_capacitance_f !== undefined ? ` plus the fixture's ${formatSi(cal.fixture_capacitance_f, "F", 4)}` : ""} although the capture says the tank is not calibrated`);
    }
    if (r < 0.5 || r > 2) {
      refuse("TANK_IMPLAUSIBLE", `tank_c_f ${formatSi(c.tank_c_f, "F", 4)} is not within a factor 2 of the nominal ${formatSi(cal.nominal_tank_c_f, "F", 4)}: a mix-up, not a tolerance`);
    }
  }
  if (c.thresholds_v.some((v) => Math.abs(v) > MAX_THRESHOLD_V)) {
    refuse("THRESHOLDS_IMPLAUSIBLE", `thresholds of ${c.thresholds_v.map((v) => formatSi(v, "V", 3)).join(" and ")} are beyond any comparator front end (±${MAX_THRESHOLD_V} V)`);
  }
}

/** The largest initial amplitude the stated drive allows, volts; undefined when not stated. */
export function amplitudeBound(c: CaptureV1, a: Pick<RingAnalysis, "fd_hz">): number | undefined {
  const d = c.drive;
  if (!d || !(d.supply_v > 0) || !(d.series_ohm > 0) || !(a.fd_hz > 0)) return undefined;
  return d.supply_v / d.series_ohm / (c.tank_c_f * 2 * Math.PI * a.fd_hz);
}

/** Checks a reading against the capture's drive, clamp and timer. Throws ImplausibleError. */
export function checkReadingPlausible(c: CaptureV1, a: RingAnalysis): void {
  const bound = amplitudeBound(c, a);
  if (bound !== undefined && a.amplitude_v > AMPLITUDE_MARGIN * bound) {
    refuse("RING_AMPLITUDE_IMPLAUSIBLE", `a ring of ${formatSi(a.amplitude_v, "V", 3)} cannot come from ${formatSi(c.drive!.supply_v, "V", 3)} through ${formatSi(c.drive!.series_ohm, "Ω", 3)} into ${formatSi(c.tank_c_f, "F", 3)} (at most ${formatSi(bound, "V", 3)}), so the thresholds or the tank value are wrong`, "check the threshold calibration (henrytick calibrate thresholds) or measure the part again");
  }
  const clamp = c.drive?.clamp_v;
  if (typeof clamp === "number" && clamp > 0 && a.amplitude_v > CLAMP_MARGIN * clamp) {
    refuse("RING_AMPLITUDE_IMPLAUSIBLE", `a ring of ${formatSi(a.amplitude_v, "V", 3)} against the front end's ${formatSi(clamp, "V", 3)} clamp, so the thresholds are wrong`, "check the threshold calibration (henrytick calibrate thresholds) or measure the part again");
  }
  const ticksPerPeriod = c.tick_hz / a.f0_hz;
  if (!(ticksPerPeriod >= MIN_TICKS_PER_PERIOD)) {
    refuse("RESULT_OUT_OF_RANGE", `a ring at ${formatSi(a.f0_hz, "Hz", 4)} lasts ${ticksPerPeriod.toFixed(2)} ticks per period, fewer than the ${MIN_TICKS_PER_PERIOD} the timer needs to resolve it`);
  }
  if (!(a.inductance_h >= INDUCTANCE_RANGE_H[0] && a.inductance_h <= INDUCTANCE_RANGE_H[1])) {
    refuse("RESULT_OUT_OF_RANGE", `${formatSi(a.inductance_h, "H", 4)} is outside what any tester of this kind measures (${formatSi(INDUCTANCE_RANGE_H[0], "H")} to ${formatSi(INDUCTANCE_RANGE_H[1], "H")})`);
  }
}

/**
 * A calibrated tank may differ from the tester's board-reported nominal by this much at most:
 * the tanks are C0G/film parts of a few per cent, plus tens of picofarads of fixture; a profile
 * further off belongs to another board or was entered wrong (60 nF for a 100 nF tank read a
 * 330 µH part as 552.6 µH).
 */
export const PROFILE_TANK_TOLERANCE = 0.25;

/**
 * Checks a calibration profile against the tester it is applied to: every tank it calibrates
 * must exist on the board, with the board's nominal value, and its calibrated value near it.
 * Throws CalibrationError PROFILE_BOARD_MISMATCH.
 */
export function checkProfileAgainstBoard(profile: CalibrationProfile, board: DeviceProfile, path: string): void {
  const next = `restore the previous profile ("henrytick calibrate restore") or calibrate this tester again; measuring with the profile left out (uncalibrated) uses nominal values meanwhile`;
  for (const t of profile.tanks) {
    const b = board.tanks.find((x) => x.index === t.index);
    if (!b) {
      throw new CalibrationError("PROFILE_BOARD_MISMATCH", `${path}: tank ${t.index} is calibrated, but this tester has tanks ${board.tanks.map((x) => x.index).join(", ")} only; ${next}`);
    }
    if (Math.abs(t.nominal_f / b.nominal_f - 1) > 0.01) {
      throw new CalibrationError("PROFILE_BOARD_MISMATCH", `${path}: tank ${t.index} was calibrated as a ${formatSi(t.nominal_f, "F", 3)} tank, but this tester's board reports ${formatSi(b.nominal_f, "F", 3)}; ${next}`);
    }
    if (Math.abs(t.c_f / b.nominal_f - 1) > PROFILE_TANK_TOLERANCE) {
      throw new CalibrationError("PROFILE_BOARD_MISMATCH", `${path}: tank ${t.index} is calibrated at ${formatSi(t.c_f, "F", 4)}, ${(((t.c_f / b.nominal_f) - 1) * 100).toFixed(0)} % from the ${formatSi(b.nominal_f, "F", 3)} this tester's board reports (more than ±${PROFILE_TANK_TOLERANCE * 100} %): a mix-up, not a tolerance; ${next}`);
    }
  }
}
