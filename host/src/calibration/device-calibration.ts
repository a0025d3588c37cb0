// The calibration a measurement on this tester should apply: its stored profile, found by device
// id, turned into what measurePart takes. This is how every measurement from a device gets
// its calibration without the caller handling files.

import type { DeviceClient } from "../device/client.ts";
import type { AppliedCalibration } from "./applied.ts";
import { checkProfileAgainstBoard } from "../measure/plausibility.ts";
import { appliedCalibration } from "./apply-profile.ts";
import type { CalibrationProfile } from "./profile-schema.ts";
import type { StoreOptions } from "./profile-store.ts";
import { loadProfile, profilePaths } from "./profile-store.ts";

export interface DeviceCalibration {
  profile: CalibrationProfile | null;
  /** Undefined when the tester was never calibrated (nominal values apply). */
  applied?: AppliedCalibration;
  path: string;
}

/** Throws CalibrationError (PROFILE_*) when the stored profile is damaged: never silently nominal. */
export function deviceCalibration(client: DeviceClient, store: StoreOptions = {}): DeviceCalibration {
  const id = client.identity.device_id;
  const path = profilePaths(id, store).current;
  const profile = loadProfile(id, store);
  if (!profile) return { profile: null, path };
  checkProfileAgainstBoard(profile, client.profile, path);
  return { profile, applied: appliedCalibration(profile, `${path} (updated ${profile.updated})`), path };
}
