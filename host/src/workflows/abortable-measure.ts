// A reading that a bench application can abandon through an AbortSignal. The device client runs
// one command at a time, so an abort cannot cut a pulse short: the call rejects at once with
// code ABORTED, the capture in flight (milliseconds to about a second) completes in the
// background and is discarded, and the tester is then told to stop anything still queued.

import type { DeviceClient } from "../device/client.ts";
import { measurePart, type MeasureOptions, type Reading } from "../measure/measure-part.ts";
import { CodedError } from "../coded-error.ts";

export class MeasureAbortedError extends CodedError<"ABORTED"> {
  constructor() {
    super("ABORTED", "the reading was abandoned (AbortSignal); start a new one when ready");
  }
}

export interface AbortableMeasureOptions extends MeasureOptions {
  signal?: AbortSignal;
}

export function measureAbortable(client: DeviceClient, opts: AbortableMeasureOptions = {}): Promise<Reading> {
  const { signal, ...rest } = opts;
  if (signal?.aborted) return Promise.reject(new MeasureAbortedError());
  const work = measurePart(client, rest);
  if (!signal) return work;
  return new Promise<Reading>((resolve, reject) => {
    const onAbort = () => {
      reject(new MeasureAbortedError());
      // The result no longer matters; let the tester drop whatever is still queued.
      work.catch(() => undefined).finally(() => client.abort().catch(() => undefined));
    };
    signal.addEventListener("abort", onAbort, { once: true });
    work.then(
      (r) => {
        signal.removeEventListener("abort", onAbort);
        resolve(r);
      },
      (e) => {
        signal.removeEventListener("abort", onAbort);
        reject(e);
      },
    );
  });
}
