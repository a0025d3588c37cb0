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
}

export interface TankCapacitor {
  index: number;
  /** Nominal value; calibration supplies the effective one. */
  nominal_f: number;
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
}

export function parseIdentity(frame: Frame): DeviceIdentity {
  if (frame.tag !== "ID" || frame.fields.length !== 4) {
    throw new ProtocolError(`unexpected identify reply: ${frame.line}`, "BAD_REPLY");
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
        break;
      default:
        break; // later profile lines are ignored by older hosts, by design
    }
  }
  const missing = ["tick_hz", "thresholds_v", "supply_v", "buffer_edges"].filter((k) => (p as Record<string, unknown>)[k] === undefined);
  if (missing.length > 0 || p.drives.length === 0 || p.tanks.length === 0) {
    throw new ProtocolError(`device profile incomplete (missing ${missing.join(", ") || "drive or tank list"})`, "BAD_PROFILE");
  }
  p.drives.sort((a, b) => a.index - b.index);
  p.tanks.sort((a, b) => a.index - b.index);
  return p as DeviceProfile;
}
