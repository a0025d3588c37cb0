// A reading that a bench application can abandon through an AbortSignal: `measurePart` with its
// `signal` option. No pulse starts after the abort, a capture in flight is stopped (the tester is
// sent AB), and the call rejects with code ABORTED once the tester has stopped, so the client is
// ready for the next reading as soon as the promise settles.

import type { DeviceClient } from "../device/client.ts";
import { measurePart, type MeasureOptions, type Reading } from "../measure/measure-part.ts";

export { MeasureAbortedError } from "../measure/events.ts";

export type AbortableMeasureOptions = MeasureOptions;

export function measureAbortable(client: DeviceClient, opts: AbortableMeasureOptions = {}): Promise<Reading> {
  return measurePart(client, opts);
}
