// Test helper: the edges a capture stream carries, read through the host's own stream checks.

import { decodeLine } from "../../host/src/device/frames.ts";
import type { MeasureSettings } from "../../host/src/device/client.ts";
import { CaptureStreamReader } from "../../host/src/device/stream-reader.ts";
import type { RawCapture } from "../../host/src/device/stream-reader.ts";

/** Reads the CH..CE lines in `text` for a measurement made with `s`; throws on any defect. */
export function readCapture(text: string, s: MeasureSettings): RawCapture {
  const reader = new CaptureStreamReader(s);
  for (const line of text.split("\n")) {
    if (!/^C[HDE] /.test(line)) continue;
    const d = decodeLine(line);
    if (!d.ok) throw new Error(`corrupt line ${line}`);
    const done = reader.accept(d.frame);
    if (done) return done;
  }
  throw new Error("capture stream incomplete");
}

/**
 * The entries an N-bit raw-capture port records for edges at `ticks` (since the switch opened):
 * the open entry, captures, and one overflow marker per wrap written `latency` ticks after it.
 * A capture latched after a wrap whose marker is not yet written goes first, flagged pending.
 * Each entry comes with the tick (since opening) at which it is written.
 */
export function rawEntries(ticks: number[], levels: number[], bits: number, openRaw: number, latency: number, until: number): { at: number[]; words: number[] } {
  const period = 2 ** bits;
  const wrapAt = (j: number) => j * period - openRaw;
  const at: number[] = [0];
  const words: number[] = [0x40000000 | openRaw];
  let j = 1;
  for (let k = 0; k <= ticks.length; k++) {
    const t = k < ticks.length ? ticks[k] : until;
    while (wrapAt(j) + latency <= t) {
      at.push(wrapAt(j) + latency);
      words.push((1 << 31) | 1);
      j++;
    }
    if (k === ticks.length) break;
    const pending = t >= wrapAt(j);
    at.push(t);
    words.push((((openRaw + t) % period) << 2) | (pending ? 2 : 0) | levels[k]);
  }
  return { at, words };
}
