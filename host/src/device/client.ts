// Request/response client for a tester on any Transport. One command at a time; every wait has
// a timeout; a capture stream is checked line by line (CRC, sequence, count, checksum) and, if
// damaged, fetched again with the resend command: a damaged capture never triggers a new pulse.

import { ERR_ABORTED, PROTOCOL_VERSION } from "@henrytick/shared-protocol";
import type { Transport, TransportError } from "../transport/transport.ts";
import { DeviceError, DeviceTimeoutError, STRAY_CAUSE, STRAY_NEXT } from "./errors.ts";
import type { Decoded, Frame } from "./frames.ts";
import { decodeLine, encodeCommand, intField, ProtocolError } from "./frames.ts";
import type { DeviceCounters, DeviceIdentity, DeviceProfile, SelfTestReport } from "./profile.ts";
import { parseCounters, parseIdentity, parseProfile, parseSelfTest } from "./profile.ts";
import type { RawCapture } from "./stream-reader.ts";
import { CaptureStreamReader, StreamDefect } from "./stream-reader.ts";

export interface MeasureSettings {
  /** Index of the drive resistor in the profile. */
  drive: number;
  /** Index of the tank capacitor in the profile. */
  tank: number;
  charge_us: number;
  edge_limit: number;
  timeout_ms: number;
  /** The capture ends after this long without an edge. */
  quiet_us: number;
}

export interface ClientOptions {
  /** Wait for a reply line, ms. Default 2000. */
  reply_timeout_ms?: number;
  /** Attempts to fetch a damaged capture again before giving up. Default 2. */
  resend_attempts?: number;
}

/** Options of one pulse. */
export interface PulseOptions {
  /**
   * Abandons the pulse: the client sends `AB` at once (the tester opens the switch and stops the
   * capture), waits for its acknowledgement so the link is clean for the next command, and
   * rejects with DeviceError ABORTED, unless the capture was already whole (then it is returned).
   */
  signal?: AbortSignal;
}

/** An abort sent out of turn during one pulse. */
interface AbortState {
  sent: boolean;
  /** `OK AB` lines counted before it was sent. */
  acksBefore: number;
  written: Promise<void>;
  wakeSleep: (() => void) | null;
}

const MAX_REST_WAITS = 5;
/** Codes of a line the tester could not read. */
const GARBLED = ["LINK_CRC", "LINK_SYNTAX", "LINE_TOO_LONG"];
/** Attempts to bring the link into step at connect. */
const SYNC_ATTEMPTS = 4;
const NEWLINE = new TextEncoder().encode("\n");
/** The link counts as quiet after this long without a line, ms. */
const QUIET_MS = 200;
const MAX_REST_WAIT_MS = 10_000;

function errorFrame(f: Frame, command: string): DeviceError {
  const detail = f.fields[2] !== undefined && /^\d{1,9}$/.test(f.fields[2]) ? Number(f.fields[2]) : undefined;
  return new DeviceError(Number(f.fields[0]), f.fields[1] === "?" || f.fields[1] === undefined ? command : f.fields[1], detail);
}

export class DeviceClient {
  private inbox: Decoded[] = [];
  private waiter: (() => void) | null = null;
  private linkError: TransportError | null = null;
  private busy: Promise<unknown> = Promise.resolve();
  /** Counts `OK AB` lines as they arrive, whoever reads them from the inbox. */
  private abortAcks = 0;
  /** Whole frames received on this link, and their count when the current command was written. */
  private linesSeen = 0;
  private exchangeStart = 0;
  private readonly replyTimeout: number;
  private readonly resendAttempts: number;
  identity!: DeviceIdentity;
  profile!: DeviceProfile;

  private constructor(readonly transport: Transport, opts: ClientOptions) {
    this.replyTimeout = opts.reply_timeout_ms ?? 2000;
    this.resendAttempts = opts.resend_attempts ?? 2;
    transport.onLine((line) => {
      const d = decodeLine(line);
      if (d.ok) this.linesSeen++; // frames only: a device that is not a tester sends none
      if (d.ok && d.frame.tag === "OK" && d.frame.fields[0] === "AB") this.abortAcks++;
      this.inbox.push(d);
      this.wake();
    });
    transport.onClose((err) => {
      this.linkError = err ?? this.linkError;
      this.wake();
    });
  }

  /** Identifies the tester, checks the protocol version and reads its profile. */
  static async connect(transport: Transport, opts: ClientOptions = {}): Promise<DeviceClient> {
    const client = new DeviceClient(transport, opts);
    client.identity = await client.synchronise();
    if (client.identity.protocol_version !== PROTOCOL_VERSION) {
      throw new ProtocolError(
        "PROTOCOL_VERSION",
        `tester speaks protocol v${client.identity.protocol_version}, this host speaks v${PROTOCOL_VERSION}; update the firmware or the host`,
      );
    }
    client.profile = await client.readProfile();
    return client;
  }

  /**
   * Brings the link into step before the first exchange. A newline flushes any partial line in
   * the tester's receiver (stray bytes another program wrote into the port: the tester answers
   * them with an error of its own), then ID; while the answer shows stray bytes (an unreadable
   * reply, or the tester unable to read the line), the link is drained until quiet and both are
   * sent again. LINK_NOISE when the stray bytes do not stop.
   */
  private async synchronise(): Promise<DeviceIdentity> {
    const seen: string[] = [];
    for (let attempt = 0; attempt < SYNC_ATTEMPTS; attempt++) {
      await this.transport.write(NEWLINE);
      try {
        return await this.identify(); // a garbled answer was drained until quiet in command()
      } catch (e) {
        const stray = (e instanceof ProtocolError && e.code === "LINK_CORRUPT") || (e instanceof DeviceError && GARBLED.includes(e.code));
        if (!stray) throw e;
        seen.push((e as ProtocolError | DeviceError).code);
      }
    }
    throw new ProtocolError(
      "LINK_NOISE",
      `${this.transport.description}: stray bytes on the port at every one of ${SYNC_ATTEMPTS} attempts to identify the tester (${seen.join(", ")}): ` +
        `the cause is ${STRAY_CAUSE}; ${STRAY_NEXT}`,
    );
  }

  identify(): Promise<DeviceIdentity> {
    return this.exclusive(async () => {
      return parseIdentity(await this.reply("ID", "ID", "identify"));
    });
  }

  readProfile(): Promise<DeviceProfile> {
    return this.exclusive(async () => parseProfile(await this.command("PF", [])));
  }

  /** Listens with the switch open for the profile's self-test window and reports stray edges. */
  selfTest(): Promise<SelfTestReport> {
    return this.exclusive(async () => {
      return parseSelfTest(await this.reply("ST", "SR", "self-test", (this.profile?.self_test_us ?? 0) / 1000));
    });
  }

  /** The tester's event counters (measurements, faults, refused commands, lost bytes). */
  counters(): Promise<DeviceCounters> {
    return this.exclusive(async () => {
      return parseCounters(await this.reply("CN", "CT", "counters"));
    });
  }

  /** The tester's free-running timer, low 32 bits (unsigned), as it handled the request. */
  readTicks32(): Promise<number> {
    return this.exclusive(async () => {
      return intField(await this.reply("TK", "TK", "tick"), 0, "ticks") >>> 0;
    });
  }

  /** Forces the switch open and ends any measurement. Never refused by the firmware. */
  abort(): Promise<void> {
    return this.exclusive(async () => {
      await this.command("AB", []);
    });
  }

  /** Pulses the part once and returns the verified edge record. */
  measure(s: MeasureSettings, opts: PulseOptions = {}): Promise<RawCapture> {
    return this.exclusive(async () => {
      const signal = opts.signal;
      if (signal?.aborted) throw new DeviceError(ERR_ABORTED, "MS");
      if (!signal) return this.pulse(s, null);
      // Sent out of turn, as the protocol allows for AB: the tester stops the capture now.
      const abort: AbortState = { sent: false, acksBefore: this.abortAcks, written: Promise.resolve(), wakeSleep: null };
      const onAbort = () => {
        abort.sent = true;
        abort.written = this.transport.write(encodeCommand("AB", [])).catch(() => undefined);
        abort.wakeSleep?.();
      };
      signal.addEventListener("abort", onAbort, { once: true });
      try {
        return await this.pulse(s, abort);
      } catch (e) {
        if (abort.sent) throw new DeviceError(ERR_ABORTED, "MS");
        throw e;
      } finally {
        signal.removeEventListener("abort", onAbort);
        if (abort.sent) {
          await abort.written;
          await this.awaitAbortAck(abort.acksBefore);
        }
      }
    });
  }

  /** Waits until the tester has acknowledged an AB sent out of turn; drains what comes with it. */
  private async awaitAbortAck(acksBefore: number): Promise<void> {
    try {
      while (this.abortAcks === acksBefore) await this.next(this.replyTimeout, "acknowledgement of AB");
    } catch (e) {
      // No acknowledgement: wait out whatever is still coming. A closed link is reported by the
      // next command; the abort itself has been answered already.
      if (e instanceof DeviceTimeoutError) await this.drainUntilQuiet().catch(() => undefined);
    }
    this.inbox = [];
  }

  private async pulse(s: MeasureSettings, abort: AbortState | null): Promise<RawCapture> {
    let token = this.nextToken();
    await this.startMeasurement(s, token, abort);
    // Settle + charge + capture window, plus a reply margin.
    const firstWait = this.profile.settle_us / 1000 + s.charge_us / 1000 + s.timeout_ms + this.replyTimeout;
    let lastDefect: Error | null = null;
    let firstSilence: DeviceTimeoutError | null = null;
    for (let attempt = 0; attempt <= this.resendAttempts; attempt++) {
      if (abort?.sent) throw new DeviceError(ERR_ABORTED, "MS");
      if (attempt > 0) {
        // A resend has its own token: lines of an earlier attempt still in flight cannot pass for it.
        token = this.nextToken();
        try {
          await this.requestHeld(token);
        } catch (e) {
          throw e instanceof DeviceTimeoutError ? (firstSilence ?? e) : e;
        }
      }
      try {
        return await this.readStream(s, attempt === 0 ? firstWait : this.replyTimeout, token);
      } catch (e) {
        // A damaged stream, or one that stalled, is fetched again; nothing is pulsed again.
        if (!(e instanceof StreamDefect) && !(e instanceof DeviceTimeoutError)) throw e;
        lastDefect = e;
        if (e instanceof DeviceTimeoutError) firstSilence ??= e;
        await this.drainUntilQuiet();
      }
    }
    // The tester stopped answering: the first silence says where (a resend then went unanswered too).
    if (lastDefect instanceof DeviceTimeoutError) throw firstSilence ?? lastDefect;
    throw new ProtocolError(
      "CAPTURE_DAMAGED",
      `capture damaged in transit ${this.resendAttempts + 1} times (${lastDefect?.message}); check the cable and USB port, then measure again`,
    );
  }

  /**
   * The capture the tester still holds from its last pulse, sent again (CR): the part is not
   * pulsed. `s` must be the settings of that pulse (they bound the edge record). For a reading
   * whose capture was lost on the host side; CAPTURE_LOST when the tester holds none.
   */
  recall(s: MeasureSettings): Promise<RawCapture> {
    return this.exclusive(async () => {
      const token = this.nextToken();
      await this.requestHeld(token);
      return this.readStream(s, this.replyTimeout, token);
    });
  }

  /** Asks the tester to send its held capture again under `token`. */
  private async requestHeld(token: number): Promise<void> {
    try {
      await this.command("CR", [token], 0, token);
    } catch (e) {
      if (e instanceof DeviceError && e.code === "BAD_ARGUMENT") {
        throw new ProtocolError("CAPTURE_LOST", "the tester no longer holds the capture (it may have restarted); measure again");
      }
      throw e;
    }
  }

  /** Sends MS; while the rest or ring interlock refuses, waits the time it names and asks again. */
  private async startMeasurement(s: MeasureSettings, token: number, abort: AbortState | null): Promise<void> {
    const args = [s.drive, s.tank, s.charge_us, s.edge_limit, s.timeout_ms, s.quiet_us, token];
    for (let attempt = 0; ; attempt++) {
      if (abort?.sent) throw new DeviceError(ERR_ABORTED, "MS");
      try {
        await this.command("MS", args, 0, token);
        return;
      } catch (e) {
        const waitable = e instanceof DeviceError && (e.code === "REST_PENDING" || e.code === "RINGING");
        if (!waitable || attempt >= MAX_REST_WAITS) throw e;
        const wait = Math.min(Math.max(e.detail ?? this.profile.min_rest_ms, 1), MAX_REST_WAIT_MS);
        await this.sleep(wait + 1, abort);
      }
    }
  }

  async close(): Promise<void> {
    await this.transport.close();
  }

  private async readStream(s: MeasureSettings, firstWait_ms: number, token: number): Promise<RawCapture> {
    const reader = new CaptureStreamReader(s, token);
    let wait = firstWait_ms;
    for (;;) {
      const d = await this.next(wait, "capture data");
      wait = this.replyTimeout;
      if (!d.ok) throw new StreamDefect(`corrupt line (error ${d.code})`);
      const f = d.frame;
      if (f.tag === "ER") throw errorFrame(f, "MS");
      const done = reader.accept(f);
      if (done) return done;
    }
  }

  /** Sends an argument-less command and returns its reply frame `tag`; BAD_REPLY without one. */
  private async reply(command: string, tag: string, what: string, extraWait_ms = 0): Promise<Frame> {
    const frame = (await this.command(command, [], extraWait_ms)).find((f) => f.tag === tag);
    if (!frame) throw new ProtocolError("BAD_REPLY", `${what} reply missing`);
    return frame;
  }

  /**
   * Sends a command and collects data frames until its OK; throws DeviceError on ER. With a
   * token, only an OK carrying that token counts: a stale OK of an earlier request is skipped.
   * After a reply that is corrupt or late, the link is drained until quiet before the error is
   * raised, so that the rest of that reply cannot be taken for the next command's.
   */
  private async command(tag: string, args: number[], extraWait_ms = 0, token?: number): Promise<Frame[]> {
    this.inbox = []; // lines left from an earlier exchange belong to no one
    this.exchangeStart = this.linesSeen;
    await this.transport.write(encodeCommand(tag, args));
    const frames: Frame[] = [];
    // A line the tester could not read ("ER n ?") may be ours, or stray bytes that arrived as a
    // line of their own ahead of ours: ours is answered too in that case, so listen until quiet.
    let unreadable: DeviceError | null = null;
    try {
      for (;;) {
        let d: Decoded;
        try {
          d = await this.next(unreadable ? QUIET_MS : this.replyTimeout + extraWait_ms, `reply to ${tag}`);
        } catch (e) {
          if (unreadable && e instanceof DeviceTimeoutError) throw unreadable; // quiet already
          throw e;
        }
        if (!d.ok) throw new ProtocolError("LINK_CORRUPT", `corrupt reply to ${tag} (error ${d.code}): ${JSON.stringify(d.line)}; check the cable and retry`);
        const f = d.frame;
        if (f.tag === "OK" && f.fields[0] === tag) {
          if (token === undefined || f.fields[1] === String(token)) return frames;
          continue; // an earlier request's acknowledgement
        }
        if (f.tag === "ER") {
          const err = errorFrame(f, tag);
          if (f.fields[1] === "?" && GARBLED.includes(err.code)) {
            unreadable ??= err;
            continue;
          }
          throw err;
        }
        frames.push(f);
      }
    } catch (e) {
      // A corrupt or late reply, or a tester that could not read our line (which a damaged
      // newline may have split in two, each half answered): wait out whatever else is coming.
      const garbled = e instanceof DeviceError && GARBLED.includes(e.code);
      if (e === unreadable) throw e;
      if (e instanceof ProtocolError || e instanceof DeviceTimeoutError || garbled) await this.drainUntilQuiet();
      throw e;
    }
  }

  /** Request tokens for MS and CR: 1..65535, starting anywhere so two hosts' tokens rarely meet. */
  private tokenCounter = 1 + Math.floor(Math.random() * 65535);
  private nextToken(): number {
    this.tokenCounter = (this.tokenCounter % 65535) + 1;
    return this.tokenCounter;
  }

  private async drainUntilQuiet(): Promise<void> {
    try {
      for (;;) await this.next(QUIET_MS, "drain");
    } catch (e) {
      if (!(e instanceof DeviceTimeoutError)) throw e;
    }
  }

  private next(timeout_ms: number, what: string): Promise<Decoded> {
    return new Promise((resolve, reject) => {
      const check = (): boolean => {
        if (this.inbox.length > 0) {
          resolve(this.inbox.shift()!);
          return true;
        }
        if (this.linkError) {
          reject(this.linkError);
          return true;
        }
        return false;
      };
      if (check()) return;
      const timer = setTimeout(() => {
        this.waiter = null;
        const silence = this.linesSeen === 0 ? "never" : this.linesSeen > this.exchangeStart ? "mid-reply" : "stopped";
        reject(new DeviceTimeoutError(what, timeout_ms, silence));
      }, timeout_ms);
      this.waiter = () => {
        if (check()) {
          clearTimeout(timer);
          this.waiter = null;
        }
      };
    });
  }

  /** Sleeps, or less when an abort is sent meanwhile. */
  private sleep(ms: number, abort: AbortState | null): Promise<void> {
    return new Promise((resolve) => {
      const done = () => {
        clearTimeout(timer);
        if (abort) abort.wakeSleep = null;
        resolve();
      };
      const timer = setTimeout(done, ms);
      if (abort) abort.wakeSleep = done;
    });
  }

  private wake(): void {
    this.waiter?.();
  }

  private exclusive<T>(fn: () => Promise<T>): Promise<T> {
    const run = this.busy.then(fn, fn);
    this.busy = run.catch(() => undefined);
    return run;
  }
}
