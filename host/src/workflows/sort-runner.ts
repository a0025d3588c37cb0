// The sorting loop: measure, decide whether a part is on the clips, record it once, wait for it
// to come off. Two ways to step: from the ring itself ("ring": a part is detected when it starts
// to ring and its removal when the ring vanishes) or from the user's Enter key ("enter": one
// part per line; `q` or the end of input finishes). I/O lives here; the decisions are in
// sort-session.ts and part-presence.ts.

import { ErrorCode } from "../codes.ts";
import type { DeviceClient } from "../device/client.ts";
import { MeasureAbortedError, type MeasureOptions } from "../measure/measure-part.ts";
import { readingResult } from "../measure/result.ts";
import { PresenceTracker, type Observation, type PresenceOptions } from "./part-presence.ts";
import type { SimTray } from "./sim-tray.ts";
import type { SortLog } from "./sort-log.ts";
import type { PartRecord, SortSession } from "./sort-session.ts";
import { SettingHold } from "./setting-hold.ts";
import type { FrequencyChoice } from "../ranging/choose-setting.ts";

export type SortEvent =
  | { kind: "waiting" }
  | { kind: "settling" }
  /** A recorded part; `test_frequency` when a test frequency was asked for (how near its reading came). */
  | { kind: "part"; record: PartRecord; test_frequency?: FrequencyChoice }
  | { kind: "removed" }
  | { kind: "unreadable"; code: string; message: string }
  | { kind: "no-part" }
  /** The part's held setting was let go and ranging chose again (a refusal another setting fixes); why. */
  | { kind: "setting-changed"; message: string };

export interface SortRunOptions {
  client: DeviceClient;
  session: SortSession;
  log?: SortLog;
  /** "ring" (default): detect parts from the ring; "enter": one part per input line. */
  trigger?: "ring" | "enter";
  /** Input lines for "enter": an empty line measures, `q` finishes. */
  lines?: AsyncIterable<string>;
  /** Simulated bench that swaps parts (simulated tester only). */
  tray?: SimTray;
  /** Stop after this many recorded parts. */
  maxParts?: number;
  /** Pause between readings while watching the clips, ms (default 0). */
  pollMs?: number;
  presence?: PresenceOptions;
  measure?: Omit<MeasureOptions, "onProgress">;
  onProgress?: (message: string) => void;
  signal?: AbortSignal;
  /** Clock for the records' time stamps (default: the system clock). */
  now?: () => Date;
  onEvent?: (e: SortEvent) => void;
}

export async function runSort(o: SortRunOptions): Promise<readonly PartRecord[]> {
  const emit = o.onEvent ?? (() => {});
  const now = o.now ?? (() => new Date());
  const full = () => o.maxParts !== undefined && o.session.parts.length >= o.maxParts;
  const record = (obsResult: ReturnType<typeof readingResult>) => {
    const rec = o.session.add(obsResult, now().toISOString());
    o.log?.append(rec);
    emit({ kind: "part", record: rec, ...(obsResult.test_frequency ? { test_frequency: obsResult.test_frequency } : {}) });
    return rec;
  };

  if ((o.trigger ?? "ring") === "enter") {
    if (!o.lines) throw new TypeError("lines: the enter trigger needs input lines");
    const enterHold = new SettingHold();
    for await (const line of o.lines) {
      if (o.signal?.aborted || line.trim().toLowerCase() === "q") break;
      o.tray?.next();
      // One line, one part: it ranges afresh.
      enterHold.release();
      const obs = await observe(o, enterHold, emit);
      if (obs.kind === "aborted") break;
      if (obs.kind === "open") emit({ kind: "no-part" });
      else if (obs.kind === "unreadable") emit({ kind: "unreadable", code: obs.code, message: obs.message });
      else record(obs.result);
      if (full() || (o.tray && o.tray.remaining === 0)) break;
    }
    return o.session.parts;
  }

  const tracker = new PresenceTracker(o.presence);
  // Every reading of one part on one setting (its first reading's): they agree or differ for the part, not the tank.
  const hold = new SettingHold();
  if (o.tray && !o.tray.next()) return o.session.parts;
  let lastAction = "";
  while (!o.signal?.aborted && !full()) {
    const obs = await observe(o, hold, emit);
    if (obs.kind === "aborted") break;
    const action = tracker.observe(obs.kind === "ring" ? { kind: "ring", inductance_h: obs.result.inductance_h, inductance_u_h: obs.result.inductance_u_h } : obs);
    if (action === "record" && obs.kind === "ring") {
      record(obs.result);
      o.tray?.take();
    } else if (action === "removed") {
      hold.release();
      emit({ kind: "removed" });
      if (o.tray && !o.tray.next()) break;
    } else if (action !== lastAction) {
      if (action === "wait-part") emit({ kind: "waiting" });
      if (action === "settling") emit({ kind: "settling" });
      if (action === "wait-removal" && obs.kind === "unreadable") {
        emit({ kind: "unreadable", code: obs.code, message: obs.message });
        o.tray?.take();
      }
    }
    lastAction = action;
    if (o.pollMs) await pause(o.pollMs, o.signal);
  }
  return o.session.parts;
}

type Observed =
  | { kind: "ring"; result: ReturnType<typeof readingResult> } | { kind: "open" } | { kind: "aborted" }
  | Extract<Observation, { kind: "unreadable" }> & { message: string };

async function observe(o: SortRunOptions, hold: SettingHold, emit: (e: SortEvent) => void): Promise<Observed> {
  let got;
  try {
    // The session's signal stops the reading in flight too (no pulse after it; the tester is told).
    got = await hold.measure(o.client, { ...o.measure, onProgress: o.onProgress, signal: o.signal });
  } catch (e) {
    if (e instanceof MeasureAbortedError) return { kind: "aborted" };
    throw e;
  }
  if (got.changed) emit({ kind: "setting-changed", message: got.changed });
  if (got.reading) return { kind: "ring", result: readingResult(got.reading) };
  const e = got.error!;
  if (e.code === ErrorCode.NO_RING) return { kind: "open" };
  return { kind: "unreadable", code: e.code, message: e.message };
}

function pause(ms: number, signal?: AbortSignal): Promise<void> {
  return new Promise((resolve) => {
    const t = setTimeout(done, ms);
    function done() {
      clearTimeout(t);
      signal?.removeEventListener("abort", done);
      resolve();
    }
    signal?.addEventListener("abort", done, { once: true });
  });
}
