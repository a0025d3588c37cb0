// Readings of a known part on one fixed setting, again and again, with the next pulse under way
// while the last capture is analysed. On a tester the charge, the ring and the transfer of
// reading N + 1 then take place while the host works on reading N, so a reading costs the longer
// of the two instead of their sum. The readings and their order are those of calling
// measurePart with the same options in a loop (the tester sees the same pulses in the same
// order); only the timing differs.

import type { DeviceClient } from "../device/client.ts";
import type { RawCapture } from "../device/stream-reader.ts";
import { estimateFromReading } from "../ranging/estimate.ts";
import { ReadingProgress } from "./events.ts";
import { fixedReading, planFixed, planLimits, type MeasureOptions, type Reading } from "./measure-part.ts";
import { finishReading } from "./part-fault.ts";
import { MeasureError, describeSetting } from "./read-once.ts";

export interface RepeatOptions extends MeasureOptions {
  /**
   * An earlier reading of the part (for example one automatically ranged): its drive and tank
   * are used unless `drive` / `tank` say otherwise, and what it showed of the part is the
   * estimate the setting is checked against (once), unless `estimate` is given.
   */
  after: Reading;
  /** Readings to take; without it, readings go on until `signal` fires. */
  count?: number;
  /** Start the next pulse before the last capture is analysed (default true); false: one at a time. */
  overlap?: boolean;
}

/** One reading's outcome: the reading, or the MeasureError measurePart would have thrown for it. */
export type RepeatOutcome = { ok: true; reading: Reading } | { ok: false; error: MeasureError };

/** Outcomes that show no part on the clips: the sequence ends with them. */
const PART_GONE = new Set(["EMPTY_CAPTURE", "NO_RING"]);

interface InFlight {
  progress: ReadingProgress;
  raw: Promise<RawCapture>;
}

/**
 * Yields the outcome of each reading in the order of its pulse. A setting refused before any
 * pulse (SETTING_UNSAFE, CHARGE_LIMIT, PEAK_LIMIT) and link failures are thrown, as measurePart
 * throws them. The setting is checked once, for the part of `after`: a capture with no ring at
 * all (EMPTY_CAPTURE, NO_RING: the clips are open, the part is being changed) is the last
 * outcome, and no pulse follows it but the one already under way (stopped, its capture not given);
 * read a new part with measurePart, whose probe checks it, before repeating on it. When `signal` fires, no pulse starts after it, a pulse in flight is stopped (the
 * tester is sent AB), every capture that was already whole is still analysed and yielded, and
 * the sequence ends. Ending the iteration early (break) stops the pulse in flight the same way.
 * Each reading has its own progress events; with overlap, reading N + 1's pulse event comes
 * before reading N's done event.
 */
export async function* repeatReadings(client: DeviceClient, opts: RepeatOptions): AsyncGenerator<RepeatOutcome, void, undefined> {
  const count = opts.count ?? Infinity;
  const overlap = opts.overlap ?? true;
  // One signal for the pulses: the caller's, or the end of the iteration.
  const stop = new AbortController();
  const onAbort = () => stop.abort();
  opts.signal?.addEventListener("abort", onAbort, { once: true });
  if (opts.signal?.aborted) stop.abort();
  const { after } = opts;
  const pulseOpts: MeasureOptions = {
    ...opts, signal: stop.signal, drive: opts.drive ?? after.settings.drive, tank: opts.tank ?? after.settings.tank,
    estimate: opts.estimate ?? estimateFromReading(client.profile, after.settings, after.analysis),
  };
  let inFlight: InFlight | null = null;
  try {
    if (count <= 0 || stop.signal.aborted) return;
    const plan = await planFixed(client, pulseOpts, planLimits(client, pulseOpts), new ReadingProgress(pulseOpts));
    const message = `measuring: ${describeSetting(client, plan.settings)}`;
    const start = (): InFlight => {
      const progress = new ReadingProgress(pulseOpts);
      opts.onBeforePulse?.(plan.prediction);
      const raw = progress.pulse(client, plan.settings, "fixed", 0.5, message, true);
      raw.catch(() => undefined); // awaited below; never an unhandled rejection meanwhile
      return { progress, raw };
    };
    inFlight = start();
    for (let n = 0; n < count && inFlight; n++) {
      const current: InFlight = inFlight;
      let raw: RawCapture;
      try {
        raw = await current.raw;
      } catch (e) {
        inFlight = null;
        if (stop.signal.aborted) {
          current.progress.done(true);
          return; // stopped before this capture was whole: no reading to give
        }
        current.progress.done(false);
        throw e;
      }
      inFlight = null;
      if (overlap && n + 1 < count && !stop.signal.aborted) {
        inFlight = start();
        // Let the next command go out to the tester before the CPU work on this capture.
        await new Promise((r) => setImmediate(r));
      }
      const outcome = judge(client, raw, pulseOpts, plan);
      current.progress.done(false);
      yield outcome;
      // No ring at all: the part is off the clips (or another is going on), and the setting was
      // checked for the part that was there. Pulse no more on it.
      if (!outcome.ok && PART_GONE.has(outcome.error.code)) return;
      if (!overlap && n + 1 < count && !stop.signal.aborted) inFlight = start();
    }
  } finally {
    opts.signal?.removeEventListener("abort", onAbort);
    if (inFlight) {
      // The iteration ended with a pulse under way: stop it and wait until the tester has.
      stop.abort();
      await inFlight.raw.catch(() => undefined);
      inFlight.progress.done(true);
    }
  }
}

function judge(client: DeviceClient, raw: RawCapture, opts: MeasureOptions, plan: Parameters<typeof fixedReading>[3]): RepeatOutcome {
  try {
    return { ok: true, reading: finishReading(fixedReading(client, raw, opts, plan), client.profile, opts) };
  } catch (e) {
    if (e instanceof MeasureError) return { ok: false, error: e };
    throw e;
  }
}
