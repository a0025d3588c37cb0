// Readings of a part that is already known: one automatically ranged reading, then the same
// setting again and again with its estimate (no probe), as a bench application would do.

import { measurePart } from "../../../host/src/index.ts";
import type { DeviceClient } from "../../../host/src/index.ts";
import { estimateFromReading } from "../../../host/src/ranging/estimate.ts";

/** Readings per second over `n` fixed-setting readings after one ranged reading. */
export async function knownPartReadingsPerS(client: DeviceClient, n: number): Promise<{ per_s: number; seconds: number }> {
  const first = await measurePart(client);
  const estimate = estimateFromReading(client.profile, first.settings, first.analysis);
  const fixed = { drive: first.settings.drive, tank: first.settings.tank, charge_us: first.settings.charge_us, estimate };
  const t0 = performance.now();
  for (let i = 0; i < n; i++) await measurePart(client, fixed);
  const seconds = (performance.now() - t0) / 1000;
  return { per_s: n / seconds, seconds };
}
