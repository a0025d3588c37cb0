// The threshold procedure on a tester: a high-Q part on the clips, a few auto-ranged captures,
// the ratio fitted on each (threshold-fit.ts), and the profile entry.

import type { DeviceClient } from "../device/client.ts";
import type { AppliedCalibration } from "./applied.ts";
import { ringInputFromCapture } from "../measure/capture-build.ts";
import { measurePart } from "../measure/measure-part.ts";
import { estimateFromReading } from "../ranging/estimate.ts";
import type { ThresholdEntry } from "./profile-schema.ts";
import type { ThresholdFit } from "./threshold-fit.ts";
import { fitThresholds } from "./threshold-fit.ts";

export async function calibrateThresholds(
  client: DeviceClient, opts: { captures?: number; calibration?: AppliedCalibration; onProgress?: (m: string) => void; now?: () => Date } = {},
): Promise<{ entry: ThresholdEntry; fit: ThresholdFit }> {
  // Start from the nominal thresholds: the fit finds the offset from them, not from an older fit.
  const base: AppliedCalibration | undefined = opts.calibration ? { ...opts.calibration, thresholds_v: undefined } : undefined;
  const n = opts.captures ?? 4;
  const first = await measurePart(client, { calibration: base, onProgress: opts.onProgress });
  const readings = [first];
  for (let k = 1; k < n; k++) {
    readings.push(await measurePart(client, {
      drive: first.settings.drive, tank: first.settings.tank, calibration: base, onProgress: opts.onProgress,
      estimate: estimateFromReading(client.profile, first.settings, first.analysis),
    }));
  }
  const fit = fitThresholds(readings.map((r) => ringInputFromCapture(r.capture)), readings.map((r) => r.analysis.q));
  const entry: ThresholdEntry = {
    ratio: fit.ratio, u_ratio: fit.u_ratio, thresholds_v: fit.thresholds_v, method: "threshold-fit",
    time: (opts.now ?? (() => new Date()))().toISOString(),
    detail: `comparator offset ${(fit.offset_v * 1e3).toFixed(3)} mV ± ${(fit.u_offset_v * 1e3).toFixed(3)} mV from ${n} rings at Q ${first.analysis.q.toFixed(0)}`,
  };
  return { entry, fit };
}
