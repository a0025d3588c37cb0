// The tester's identity and board profile, parsed from its ID and PF replies.

import type { Frame } from "./frames.ts";
import { intField, ProtocolError } from "./frames.ts";

export interface DeviceIdentity {
  product: string;
  firmware_version: string;
  protocol_version: number;
  device_id: string;
}

export interface DriveResistor {
  index: number;
  ohm: number;
  power_rating_w: number;
  max_charge_us: number;
  /** Single-pulse energy rating, J (absent from older firmware). */
  energy_rating_j?: number;
  /** Rest the tester enforces after the longest allowed pulse, ms (absent from older firmware). */
  rest_after_max_ms?: number;
  /**
   * Time constant of the tester's thermal model of this resistor, s: with it, the rest between
   * pulses comes from the resistor's heat budget (docs/protocol.md, "Profile frames") instead
   * of `min_rest_ms` and `rest_per_charge` (absent from older firmware).
   */
  thermal_time_constant_s?: number;
}

export interface TankCapacitor {
  index: number;
  /** Nominal value; calibration supplies the effective one. */
  nominal_f: number;
}

/**
 * The comparator's timing beyond its thresholds, as the board's design states it (profile frame
 * `PD`, docs/protocol.md; absent from older firmware): what the analysis needs to correct edge
 * times for first passage, skew and overdrive delay (docs/method.md §2a). Ring-referred.
 */
export interface ComparatorBoardTiming {
  /** Input noise rms the comparator decides on, volts, and its first-order bandwidth, Hz. */
  noise_v: number;
  noise_bw_hz: number;
  /** Propagation delays of a low->high and a high->low output, seconds. */
  delay_rise_s: number;
  delay_fall_s: number;
  /** Standard uncertainty of delay_rise_s - delay_fall_s (the skew), seconds. */
  skew_u_s: number;
  /** Overdrive charge of the input stage, volt-seconds (0: none stated). */
  overdrive_v_s: number;
}

export interface DeviceProfile {
  tick_hz: number;
  drives: DriveResistor[];
  tanks: TankCapacitor[];
  /** [rising, falling] comparator thresholds referred to the ring voltage. */
  thresholds_v: [number, number];
  supply_v: number;
  clamp_v: number;
  buffer_edges: number;
  min_rest_ms: number;
  rest_per_charge: number;
  max_timeout_ms: number;
  settle_us: number;
  /** Longest charge time on any resistor, µs (absent from older firmware). */
  max_charge_us?: number;
  /** How long the self-test listens with the switch open, µs (absent from older firmware). */
  self_test_us?: number;
  /** Capture timer width the port delivers: 0 extended ticks, else raw bits extended by the firmware. */
  capture_bits?: number;
  /** The comparator's timing (absent from older firmware: the analysis then fits thresholds only). */
  comparator?: ComparatorBoardTiming;
}

export function parseIdentity(frame: Frame): DeviceIdentity {
  if (frame.tag !== "ID" || frame.fields.length !== 4) {
    throw new ProtocolError("BAD_REPLY", `unexpected identify reply: ${frame.line}`);
  }
  return {
    product: frame.fields[0],
    firmware_version: frame.fields[1],
    protocol_version: intField(frame, 2, "protocol"),
    device_id: frame.fields[3],
  };
}

export function parseProfile(frames: Frame[]): DeviceProfile {
  const p: Partial<DeviceProfile> & { drives: DriveResistor[]; tanks: TankCapacitor[] } = { drives: [], tanks: [] };
  for (const f of frames) {
    switch (f.tag) {
      case "PT":
        p.tick_hz = intField(f, 0, "tick_hz");
        break;
      case "PR":
        p.drives.push({
          index: intField(f, 0, "index"),
          ohm: intField(f, 1, "milliohm") / 1000,
          power_rating_w: intField(f, 2, "power_mw") / 1000,
          max_charge_us: intField(f, 3, "max_charge_us"),
          ...(f.fields.length > 4 ? { energy_rating_j: intField(f, 4, "energy_uj") / 1e6 } : {}),
          ...(f.fields.length > 5 ? { rest_after_max_ms: intField(f, 5, "rest_after_max_ms") } : {}),
          ...(f.fields.length > 6 ? { thermal_time_constant_s: intField(f, 6, "tau_us") / 1e6 } : {}),
        });
        break;
      case "PC":
        p.tanks.push({ index: intField(f, 0, "index"), nominal_f: intField(f, 1, "pf") / 1e12 });
        break;
      case "PH":
        p.thresholds_v = [intField(f, 0, "rising_uv") / 1e6, intField(f, 1, "falling_uv") / 1e6];
        break;
      case "PS":
        p.supply_v = intField(f, 0, "supply_mv") / 1000;
        p.clamp_v = intField(f, 1, "clamp_mv") / 1000;
        break;
      case "PL":
        p.buffer_edges = intField(f, 0, "buffer_edges");
        p.min_rest_ms = intField(f, 1, "min_rest_ms");
        p.rest_per_charge = intField(f, 2, "rest_per_charge");
        p.max_timeout_ms = intField(f, 3, "max_timeout_ms");
        p.settle_us = intField(f, 4, "settle_us");
        if (f.fields.length > 5) p.max_charge_us = intField(f, 5, "max_charge_us");
        if (f.fields.length > 6) p.self_test_us = intField(f, 6, "self_test_us");
        break;
      case "PD":
        p.comparator = {
          noise_v: intField(f, 0, "noise_uv") / 1e6,
          noise_bw_hz: intField(f, 1, "noise_bw_khz") * 1e3,
          delay_rise_s: intField(f, 2, "delay_rise_ps") * 1e-12,
          delay_fall_s: intField(f, 3, "delay_fall_ps") * 1e-12,
          skew_u_s: intField(f, 4, "skew_u_ps") * 1e-12,
          overdrive_v_s: intField(f, 5, "overdrive_fvs") * 1e-15,
        };
        break;
      case "PX":
        p.capture_bits = intField(f, 0, "capture_bits");
        break;
      default:
        break; // later profile lines are ignored by older hosts, by design
    }
  }
  const missing = ["tick_hz", "thresholds_v", "supply_v", "buffer_edges"].filter((k) => (p as Record<string, unknown>)[k] === undefined);
  if (missing.length > 0 || p.drives.length === 0 || p.tanks.length === 0) {
    throw new ProtocolError("BAD_PROFILE", `device profile incomplete (missing ${missing.join(", ") || "drive or tank list"})`);
  }
  p.drives.sort((a, b) => a.index - b.index);
  p.tanks.sort((a, b) => a.index - b.index);
  return p as DeviceProfile;
}

/** Result of the self-test: edges heard with the switch open over the window. */
export interface SelfTestReport {
  window_us: number;
  stray_edges: number;
  passed: boolean;
}

export function parseSelfTest(frame: Frame): SelfTestReport {
  if (frame.tag !== "SR" || frame.fields.length < 2) throw new ProtocolError("BAD_REPLY", `unexpected self-test reply: ${frame.line}`);
  const stray = intField(frame, 1, "stray_edges");
  return { window_us: intField(frame, 0, "window_us"), stray_edges: stray, passed: stray === 0 };
}

/** Event counters since the tester started. */
export interface DeviceCounters {
  measurements: number;
  faults: number;
  rejected: number;
  rx_overruns: number;
}

export function parseCounters(frame: Frame): DeviceCounters {
  if (frame.tag !== "CT" || frame.fields.length < 4) throw new ProtocolError("BAD_REPLY", `unexpected counters reply: ${frame.line}`);
  return {
    measurements: intField(frame, 0, "measurements"),
    faults: intField(frame, 1, "faults"),
    rejected: intField(frame, 2, "rejected"),
    rx_overruns: intField(frame, 3, "rx_overruns"),
  };
}
