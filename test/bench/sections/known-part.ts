// Readings of a part that is already known: one automatically ranged reading, then the same
// setting again and again with its estimate (no probe), as a bench application would do: one
// pulse at a time (measurePart in a loop), or with the next pulse under way while the last
// capture is analysed (repeatReadings).

import { measurePart, repeatReadings } from "../../../host/src/index.ts";
import type { DeviceClient } from "../../../host/src/index.ts";
import { estimateFromReading } from "../../../host/src/ranging/estimate.ts";

/** Readings per second over `n` fixed-setting readings after one ranged reading, each way. */
export async function knownPartReadingsPerS(client: DeviceClient, n: number): Promise<{ per_s: number; seconds: number; overlap_per_s: number }> {
  const first = await measurePart(client);
  const estimate = estimateFromReading(client.profile, first.settings, first.analysis);
  const fixed = { drive: first.settings.drive, tank: first.settings.tank, charge_us: first.settings.charge_us, estimate };
  let t0 = performance.now();
  for (let i = 0; i < n; i++) await measurePart(client, fixed);
  const seconds = (performance.now() - t0) / 1000;
  t0 = performance.now();
  let ok = 0;
  for await (const o of repeatReadings(client, { after: first, ...fixed, count: n })) if (o.ok) ok++;
  const overlap_s = (performance.now() - t0) / 1000;
  if (ok !== n) throw new Error(`${n - ok} of ${n} overlapped readings failed`);
  return { per_s: n / seconds, seconds, overlap_per_s: n / overlap_s };
}
