// Progress of one reading as typed events, and the abort check at each pulse boundary. Every
// pulse the measuring path fires goes through `pulse()` here: it refuses to start a pulse once
// the caller's AbortSignal has fired, and it reports the pulse as an event. The plain string
// progress callback receives each event's `message`, so both views say the same thing.

import type { DeviceClient, MeasureSettings } from "../device/client.ts";
import type { RawCapture } from "../device/stream-reader.ts";
import { CodedError } from "../coded-error.ts";
import type { CautionCode } from "../codes.ts";

/** What the reading is doing: probing the part gently, ranging step by step, or on a fixed setting. */
export type MeasurePhase = "probe" | "ranging" | "fixed";

/** A setting as indices and as the values they stand for. */
export interface SettingInfo {
  drive: number;
  tank: number;
  charge_us: number;
  drive_ohm: number;
  tank_f: number;
}

interface EventBase {
  phase: MeasurePhase;
  /** A rough share of the reading done, 0 to 1, never decreasing within one reading. */
  fraction: number;
  /** The same event as one line of text (what `onProgress` receives). */
  message: string;
}

/** A pulse is about to be fired; `pulse` counts the pulses of this reading from 1. */
export interface PulseEvent extends EventBase {
  type: "pulse";
  setting: SettingInfo;
  pulse: number;
}

/** Ranging chose its next setting; `step` counts from 1, at most `of` steps. */
export interface StepEvent extends EventBase {
  type: "step";
  phase: "ranging";
  step: number;
  of: number;
  setting: SettingInfo;
  reason: string;
}

/** Something about the ring changed the plan: over the peak limit, or amplitude-dependent. */
export interface CautionEvent extends EventBase {
  type: "caution";
  code: CautionCode;
  amplitude_v: number;
}

/** The reading is over (whatever its outcome): `pulses` fired in all. */
export interface DoneEvent extends EventBase {
  type: "done";
  pulses: number;
  aborted: boolean;
}

export type MeasureEvent = PulseEvent | StepEvent | CautionEvent | DoneEvent;

export class MeasureAbortedError extends CodedError<"ABORTED"> {
  constructor() {
    super("ABORTED", "the reading was abandoned (AbortSignal); start a new one when ready");
  }
}

export interface ProgressOptions {
  onProgress?: (message: string) => void;
  onEvent?: (e: MeasureEvent) => void;
  signal?: AbortSignal;
}

/** Share of a reading given to the probe; ranging or the fixed pulse takes the rest. */
const PROBE_SHARE = 0.25;

/** The progress and abort state of one reading, handed down the measuring path. */
export class ReadingProgress {
  pulses = 0;
  /** Set when an abort reached a pulse in flight: the client has told the tester (AB) itself. */
  testerTold = false;
  private fraction = 0;
  private phase: MeasurePhase = "probe";
  private readonly onEvent?: (e: MeasureEvent) => void;
  private readonly onProgress?: (message: string) => void;
  readonly signal?: AbortSignal;

  constructor(opts: ProgressOptions = {}) {
    this.onEvent = opts.onEvent;
    this.onProgress = opts.onProgress;
    this.signal = opts.signal;
  }

  /** A context from a bare string callback (older call sites) or an existing context. */
  static from(p: ReadingProgress | ((message: string) => void) | undefined): ReadingProgress {
    if (p instanceof ReadingProgress) return p;
    return new ReadingProgress({ onProgress: p });
  }

  /** Throws MeasureAbortedError once the signal has fired. */
  checkAborted(): void {
    if (this.signal?.aborted) throw new MeasureAbortedError();
  }

  /** Fraction for the probe's n-th attempt of at most `of`, or ranging's step of `of`. */
  probeFraction(n: number, of: number): number {
    return PROBE_SHARE * Math.min(1, n / Math.max(1, of));
  }
  stepFraction(step: number, of: number): number {
    return PROBE_SHARE + (1 - PROBE_SHARE) * Math.min(1, step / Math.max(1, of));
  }

  emit(e: MeasureEvent): void {
    this.fraction = Math.max(this.fraction, Math.min(1, e.fraction));
    e.fraction = this.fraction;
    this.phase = e.phase;
    this.onEvent?.(e);
    if (e.type !== "done") this.onProgress?.(e.message);
  }

  /**
   * Fires one pulse: refuses once aborted (the pulse boundary), reports it, and hands the
   * signal to the client so that an abort during the capture tells the tester at once. A
   * capture that was whole when the abort came is dropped, unless `keepWhole`.
   */
  async pulse(client: DeviceClient, s: MeasureSettings, phase: MeasurePhase, fraction: number, message: string, keepWhole = false): Promise<RawCapture> {
    this.checkAborted();
    this.emit({ type: "pulse", phase, setting: settingInfo(client, s), pulse: this.pulses + 1, fraction, message });
    this.checkAborted(); // a listener may abort on the announcement
    this.pulses++;
    let raw: RawCapture;
    try {
      raw = await client.measure(s, { signal: this.signal });
    } finally {
      if (this.signal?.aborted) this.testerTold = true;
    }
    if (!keepWhole) this.checkAborted(); // a capture that finished as the abort came is not analysed
    return raw;
  }

  done(aborted: boolean): void {
    this.emit({ type: "done", phase: this.phase, pulses: this.pulses, aborted, fraction: 1, message: `done: ${this.pulses} pulse${this.pulses === 1 ? "" : "s"}` });
  }
}

export function settingInfo(client: DeviceClient, s: { drive: number; tank: number; charge_us: number }): SettingInfo {
  return { drive: s.drive, tank: s.tank, charge_us: s.charge_us, drive_ohm: client.profile.drives[s.drive].ohm, tank_f: client.profile.tanks[s.tank].nominal_f };
}
