// Turns a verified device capture into a capture file record, and a capture record into the
// analysis input. With a calibration, the tank's effective capacitance, the thresholds and the
// timebase come from it; without one, the tank is taken at its nominal value with the board's
// C0G/film tolerance (±1 %, rectangular: u = 1 % / sqrt(3), JCGM 100:2008 §4.3.7). The
// comparator's timing (the board profile's noise and overdrive charge, the calibrated or the
// board's skew) is recorded in the capture and applied from there, so that a saved capture
// analyses as the reading did.

import { nominalTankU } from "../nominal-uncertainty.ts";
import type { RingInput } from "../analysis/index.ts";
import type { CaptureComparator, CaptureV1 } from "../capture/capture-file.ts";
import type { DeviceIdentity, DeviceProfile } from "../device/profile.ts";
import type { RawCapture } from "../device/stream-reader.ts";
import type { AppliedCalibration } from "../calibration/applied.ts";
import { EdgeList, edgesOf, pairsFor } from "../capture/edge-list.ts";

export function captureFromDevice(
  raw: RawCapture, identity: DeviceIdentity, profile: DeviceProfile, transport: string, label?: string,
  calibration?: AppliedCalibration,
): CaptureV1 {
  const s = raw.settings;
  const nominal = profile.tanks[s.tank].nominal_f;
  const calTank = calibration?.tanks?.[s.tank];
  const ppm = calibration?.timebase_ppm ?? 0;
  const tbU = calTank?.timebase_u_ppm ?? calibration?.timebase_u_ppm;
  // The fixture's capacitance (open nulling) is added where the tank's value does not hold it:
  // an uncalibrated tank, or one calibrated on the board's terminals. Its u is the budget's own line.
  const fixture = calibration?.fixture && !(calTank && calTank.fixture_included !== false) ? calibration.fixture : undefined;
  return {
    format: "henrytick-capture",
    version: 1,
    tick_hz: raw.tick_hz * (1 + ppm * 1e-6),
    tank_c_f: (calTank ? calTank.c_f : nominal) + (fixture?.c_f ?? 0),
    tank_c_u_f: calTank ? calTank.u_f : nominalTankU(nominal),
    thresholds_v: calibration?.thresholds_v ? [calibration.thresholds_v[0], calibration.thresholds_v[1]] : [profile.thresholds_v[0], profile.thresholds_v[1]],
    calibration: calibration
      ? {
        source: calibration.source, tank_calibrated: calTank !== undefined, nominal_tank_c_f: nominal, nominal_tick_hz: raw.tick_hz, timebase_ppm: ppm,
        ...(tbU !== undefined ? { timebase_u_ppm: tbU } : {}),
        ...(calibration.leads ? { lead_inductance_h: calibration.leads.l_h, lead_u_h: calibration.leads.u_h } : {}),
        ...(fixture ? { fixture_capacitance_f: fixture.c_f, fixture_u_f: fixture.u_f } : {}),
        ...(calibration.comparator_skew ? { comparator_skew_s: calibration.comparator_skew.skew_s, comparator_skew_u_s: calibration.comparator_skew.u_s } : {}),
      }
      : { source: "nominal (uncalibrated)", tank_calibrated: false, nominal_tank_c_f: nominal, nominal_tick_hz: raw.tick_hz, timebase_ppm: 0 },
    ...comparatorRecord(profile, calibration),
    drive: { supply_v: profile.supply_v, series_ohm: profile.drives[s.drive].ohm, clamp_v: profile.clamp_v },
    range: {
      drive_index: s.drive, tank_index: s.tank, charge_us: s.charge_us,
      edge_limit: s.edge_limit, timeout_ms: s.timeout_ms, quiet_us: s.quiet_us,
    },
    device: {
      id: identity.device_id, firmware_version: identity.firmware_version,
      protocol_version: identity.protocol_version, transport, clamp_v: profile.clamp_v, max_timeout_ms: profile.max_timeout_ms,
    },
    meta: { ...(label ? { label } : {}), time: new Date().toISOString(), end_reason: raw.end_reason },
    // The edge list is built once here; the checks, the analysis and the judgement share it.
    edges: pairsFor(raw.edges ?? EdgeList.from(raw.ticks, raw.levels)),
  };
}

/**
 * Relative standard uncertainty of a board's overdrive charge: the profile states a nominal
 * value only, read off a datasheet's delay-versus-overdrive curve, whose spread over parts and
 * temperature is of this order (datasheet-typical, value from memory).
 */
export const OVERDRIVE_U_REL = 0.5;

/**
 * The comparator timing a reading applies: the skew from calibration when there is one, else the
 * board's design difference of the two delays, taken as exact (its stated uncertainty is not yet
 * applied: as the prior of a free skew it let a saturating core's fit run to an amplitude 2.5x
 * what the drive allows before the fault judgement saw it, docs/hardware.md); the board's noise
 * (bandwidth and rms) and overdrive charge. Nothing when neither the profile (older firmware)
 * nor the calibration says anything.
 */
export function comparatorRecord(profile: DeviceProfile, calibration?: AppliedCalibration): { comparator?: CaptureComparator } {
  const b = profile.comparator;
  const cal = calibration?.comparator_skew;
  if (!b && !cal) return {};
  const c: CaptureComparator = cal
    ? { skew_s: cal.skew_s, skew_u_s: cal.u_s, skew_source: "calibration" }
    : { skew_s: b!.delay_rise_s - b!.delay_fall_s, skew_u_s: 0, skew_source: "board profile" };
  if (b && b.noise_bw_hz > 0) {
    c.noise_bw_hz = b.noise_bw_hz;
    // Where the board states no noise, the noise the fit's scatter implies stands in.
    if (b.noise_v > 0) c.noise_v = b.noise_v;
    c.noise_source = b.noise_v > 0 ? "board profile" : "fit";
  }
  if (b && b.overdrive_v_s > 0) {
    c.overdrive_v_s = b.overdrive_v_s;
    c.overdrive_u_v_s = OVERDRIVE_U_REL * b.overdrive_v_s;
  }
  return { comparator: c };
}

/** The analysis's comparator timing from a capture: its record, or an older file's calibrated skew. */
export function comparatorTimingFromCapture(c: CaptureV1): RingInput["comparator"] {
  const r = c.comparator;
  if (r) {
    return {
      skew_s: r.skew_s, skew_u_s: r.skew_u_s, skew_source: r.skew_source,
      ...(r.noise_bw_hz !== undefined ? { noise_bw_hz: r.noise_bw_hz } : {}),
      ...(r.noise_v !== undefined ? { noise_v: r.noise_v } : {}),
      ...(r.overdrive_v_s !== undefined ? { overdrive_v_s: r.overdrive_v_s, overdrive_u_v_s: r.overdrive_u_v_s ?? OVERDRIVE_U_REL * r.overdrive_v_s } : {}),
    };
  }
  if (c.calibration?.comparator_skew_s !== undefined) {
    return { skew_s: c.calibration.comparator_skew_s, skew_u_s: c.calibration.comparator_skew_u_s ?? 0, skew_source: "calibration" };
  }
  return undefined;
}

export function ringInputFromCapture(c: CaptureV1): RingInput {
  const comparator = comparatorTimingFromCapture(c);
  // A malformed record goes to the analysis as it stands, which refuses it with its own message.
  const edges = edgesOf(c);
  return {
    tick_hz: c.tick_hz,
    ticks: edges ? edges.ticks : c.edges.map((e) => e[0]),
    levels: edges ? edges.levels : c.edges.map((e) => e[1]),
    tank_c_f: c.tank_c_f,
    tank_c_u_f: c.tank_c_u_f,
    thresholds_v: [c.thresholds_v[0], c.thresholds_v[1]],
    // The tester stopped because the comparator went quiet: the ring really ended there, which
    // pins the amplitude of a short, heavily damped ring.
    ring_ended: c.meta?.end_reason === "quiet",
    ...(c.calibration?.timebase_u_ppm !== undefined ? { timebase_u_rel: c.calibration.timebase_u_ppm * 1e-6 } : {}),
    // The comparator's timing: the analysis takes the skew, first-passage shift and overdrive
    // delay out of the edge times and carries their uncertainty into U (docs/method.md §2a).
    ...(comparator ? { comparator } : {}),
  };
}
