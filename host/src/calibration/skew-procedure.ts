// The skew procedure on a tester: one reference part (any stable coil) on the clips, rung on two
// or more tanks, the skew fitted from all rings (skew-fit.ts), and the profile entry.

import type { DeviceClient } from "../device/client.ts";
import type { DeviceProfile } from "../device/profile.ts";
import { ringInputFromCapture } from "../measure/capture-build.ts";
import { measurePart } from "../measure/measure-part.ts";
import { MeasureError } from "../measure/read-once.ts";
import type { AppliedCalibration } from "./applied.ts";
import type { SkewEntry } from "./profile-schema.ts";
import { fitSkew, type SkewFit } from "./skew-fit.ts";

/** The auto-ranged tank and a neighbour a decade away (about 3x in frequency): the smaller one
 *  when there is one, since a faster ring shows a skew more. */
export function skewTanks(profile: DeviceProfile, ranged: number): number[] {
  const other = ranged > 0 ? ranged - 1 : ranged + 1;
  return other < profile.tanks.length ? [ranged, other] : [ranged];
}

export async function calibrateSkew(
  client: DeviceClient,
  opts: { tanks?: number[]; captures?: number; calibration?: AppliedCalibration; onProgress?: (m: string) => void; now?: () => Date } = {},
): Promise<{ entry: SkewEntry; fit: SkewFit }> {
  // Without an older skew: the fit finds it anew, from the edges alone.
  const base: AppliedCalibration | undefined = opts.calibration ? { ...opts.calibration, comparator_skew: undefined } : undefined;
  const n = opts.captures ?? 3;
  const first = await measurePart(client, { calibration: base, onProgress: opts.onProgress });
  const tanks = opts.tanks ?? skewTanks(client.profile, first.settings.tank);
  const inputs = [];
  for (const tank of tanks) {
    // Another tank rings higher for the same current (peak ~ I0 sqrt(L/C)): the auto-ranged drive
    // or, where the peak limit refuses it, the next larger drive resistor.
    let drive = first.settings.drive;
    for (let k = 0; k < n; k++) {
      if (tank === first.settings.tank && k === 0) {
        inputs.push(ringInputFromCapture(first.capture));
        continue;
      }
      for (;;) {
        try {
          const r = await measurePart(client, { drive, tank, calibration: base, onProgress: opts.onProgress });
          inputs.push(ringInputFromCapture(r.capture));
          break;
        } catch (e) {
          if (!(e instanceof MeasureError && e.code === "SETTING_UNSAFE" && drive + 1 < client.profile.drives.length)) throw e;
          drive++;
        }
      }
    }
  }
  const fit = fitSkew(inputs);
  const kHz = [...new Set(fit.rings.map((r) => (r.f0_hz / 1e3).toPrecision(3)))].join(", ");
  const entry: SkewEntry = {
    skew_s: fit.skew_s, u_skew_s: fit.u_skew_s, method: "skew-fit",
    time: (opts.now ?? (() => new Date()))().toISOString(),
    detail: `rise minus fall delay ${(fit.skew_s * 1e9).toFixed(2)} ns ± ${(fit.u_skew_s * 1e9).toFixed(2)} ns from ${fit.rings.length} rings of one part at ${kHz} kHz (tanks ${tanks.join(", ")}), Birge ratio ${fit.birge.toFixed(2)}`,
  };
  return { entry, fit };
}
