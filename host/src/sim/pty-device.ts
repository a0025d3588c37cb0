// The simulated tester as a serial device: the real firmware in a SimTester, reachable through a
// pseudo-terminal so that a host opens it exactly as it opens hardware (node-serialport, termios,
// kernel tty buffers and all).
//
// socat creates the pseudo-terminal and copies bytes between it and its own stdin/stdout, which
// are pipes to this process. That is one pseudo-terminal rather than a linked pair with one end
// opened here: fewer hops, no native binding on the device side, and — the real reason — socat's
// lifetime is tied to ours. If this process dies without cleaning up (SIGKILL, crash), the pipe
// to socat's stdin closes, socat sees end of file and exits instead of lingering with a dangling
// /dev/pts entry. (A pseudo-terminal pair outlives a dead bridge: socat does not exit when one
// side's holder closes.)

import { spawn } from "node:child_process";
import type { ChildProcessByStdio } from "node:child_process";
import type { Readable, Writable } from "node:stream";
import type { PartModel } from "./scenario.ts";
import type { BoardModel } from "./board-model.ts";
import { SimTester } from "./sim-tester.ts";
import { CodedError } from "../coded-error.ts";

export type PtyDeviceErrorCode = "SOCAT_MISSING" | "SOCAT_FAILED" | "SOCAT_NO_PTY" | "SOCAT_EXITED" | "SIM_FAULT";

/** A failure to start or keep the simulated serial device; `code` is stable, the message ends with a next step. */
export class PtyDeviceError extends CodedError<PtyDeviceErrorCode> {}

export interface PtyDeviceOptions {
  /** The part on the simulated clips; null for open terminals. */
  part: PartModel | null;
  /** Noise seed of the simulated comparator and timer. */
  seed: number;
  /** The simulated board with the bench conditions of its scenario (fixture). Default: the reference board. */
  board?: BoardModel;
  /** socat executable. Default "socat", looked up on PATH. */
  socat?: string;
  /** Longest wait for socat to report its pseudo-terminal, ms. Default 5000. */
  start_timeout_ms?: number;
}

/** Matches socat's `-d -d` notices; the wording is stable across socat 1.7 and 1.8. */
const PTY_NOTICE = /PTY is (\S+)/;
const READY_NOTICE = /starting data transfer loop/;
const MISSING_HINT = "install the Debian package socat (sudo apt-get install socat; elsewhere your system's socat package), then run this again";

type SocatProcess = ChildProcessByStdio<Writable, Readable, Readable>;

export class PtyDevice {
  /** The pseudo-terminal a host opens, e.g. /dev/pts/3. */
  readonly path: string;
  readonly tester: SimTester;
  /** Bytes that crossed the link, for diagnostics and the benchmark. */
  readonly stats = { bytes_from_host: 0, bytes_to_host: 0 };
  /** Settles when the device stops: null after close(), an error if socat or the simulation failed. */
  readonly stopped: Promise<PtyDeviceError | null>;
  private finish: (outcome: PtyDeviceError | null) => void = () => {};
  private closing = false;
  private lastInput_ms = performance.now();
  private pendingOut: Uint8Array[] = [];

  private constructor(private readonly socat: SocatProcess, path: string, tester: SimTester, stderrTail: () => string) {
    this.path = path;
    this.tester = tester;
    this.stopped = new Promise((resolve) => (this.finish = resolve));
    tester.onOutput((bytes) => this.pendingOut.push(bytes));
    socat.stdout.on("data", (chunk: Buffer) => this.fromHost(chunk));
    // A host that vanishes mid-write can leave socat's stdin broken; the exit handler reports it.
    socat.stdin.on("error", () => {});
    socat.on("exit", (code, signal) => {
      if (this.closing) return this.finish(null);
      const how = signal ? `signal ${signal}` : `status ${code}`;
      this.finish(new PtyDeviceError("SOCAT_EXITED", `socat stopped with ${how} (${stderrTail() || "no message"}); start the simulated device again`));
    });
  }

  /** Starts socat, waits for its pseudo-terminal and begins serving the firmware on it. */
  static async start(opts: PtyDeviceOptions): Promise<PtyDevice> {
    if (!Number.isInteger(opts.seed)) throw new TypeError('"seed" must be an integer');
    // Build the tester first: a firmware that fails to load should not leave a socat behind.
    const tester = new SimTester({ part: opts.part, seed: opts.seed, ...(opts.board ? { board: opts.board } : {}) });
    const exe = opts.socat ?? "socat";
    // detached: its own process group, so a Ctrl-C in the terminal reaches only us and we stop
    // socat in order. raw,echo=0: no line discipline on the device side of the terminal.
    const socat = spawn(exe, ["-d", "-d", "pty,raw,echo=0", "STDIO"], { stdio: ["pipe", "pipe", "pipe"], detached: true });
    let log = "";
    socat.stderr.setEncoding("utf8");
    socat.stderr.on("data", (s: string) => {
      log = (log + s).slice(-4000);
    });
    const tail = () => log.trim().split("\n").slice(-2).join(" / ");
    const path = await waitForPty(socat, exe, () => log, opts.start_timeout_ms ?? 5000);
    return new PtyDevice(socat, path, tester, tail);
  }

  /** Stops serving: ends socat (the pseudo-terminal disappears). Safe to call twice. */
  async close(): Promise<void> {
    if (!this.closing) {
      this.closing = true;
      if (this.socat.exitCode === null && this.socat.signalCode === null) {
        const killer = setTimeout(() => this.socat.kill("SIGKILL"), 2000);
        this.socat.kill("SIGTERM");
        await this.stopped;
        clearTimeout(killer);
      } else {
        this.finish(null);
      }
    }
    await this.stopped;
  }

  private fromHost(chunk: Buffer): void {
    if (this.closing) return;
    this.stats.bytes_from_host += chunk.length;
    try {
      // Idle time on the host's clock passes on the tester too, so its rest timers run down as
      // they would on hardware; measurements themselves are fast-forwarded inside input().
      const now_ms = performance.now();
      this.tester.advance((now_ms - this.lastInput_ms) / 1000);
      this.lastInput_ms = now_ms;
      this.tester.input(chunk);
    } catch (e) {
      this.closing = true;
      this.socat.kill("SIGTERM");
      this.finish(new PtyDeviceError("SIM_FAULT", `the simulated tester failed: ${(e as Error).message}; report this with the scenario and seed`));
      return;
    }
    // The firmware writes line by line; one write per batch keeps a whole capture to few syscalls.
    if (this.pendingOut.length === 0) return;
    const out = Buffer.concat(this.pendingOut);
    this.pendingOut = [];
    this.stats.bytes_to_host += out.length;
    this.socat.stdin.write(out);
  }
}

/** Resolves with the pseudo-terminal path once socat is copying bytes; rejects with a coded error. */
function waitForPty(socat: SocatProcess, exe: string, log: () => string, timeout_ms: number): Promise<string> {
  return new Promise((resolve, reject) => {
    let settled = false;
    const done = (err: PtyDeviceError | null, path?: string) => {
      if (settled) return;
      settled = true;
      clearTimeout(timer);
      socat.stderr.off("data", check);
      if (err) {
        if (socat.exitCode === null && socat.pid !== undefined) socat.kill("SIGKILL");
        reject(err);
      } else resolve(path!);
    };
    const check = () => {
      const m = PTY_NOTICE.exec(log());
      if (m && READY_NOTICE.test(log())) done(null, m[1]);
    };
    const timer = setTimeout(() => {
      done(new PtyDeviceError("SOCAT_NO_PTY", `socat did not report a pseudo-terminal within ${timeout_ms} ms (${log().trim() || "no message"}); check that /dev/pts is mounted and that you may create terminals`));
    }, timeout_ms);
    socat.stderr.on("data", check);
    socat.on("error", (e: NodeJS.ErrnoException) => {
      if (e.code === "ENOENT") done(new PtyDeviceError("SOCAT_MISSING", `${exe} was not found; the simulated serial device needs socat to create a pseudo-terminal: ${MISSING_HINT}`));
      else done(new PtyDeviceError("SOCAT_FAILED", `cannot run ${exe}: ${e.message}; check that it is executable, or ${MISSING_HINT}`));
    });
    socat.on("exit", (code, signal) => {
      const how = signal ? `signal ${signal}` : `status ${code}`;
      done(new PtyDeviceError("SOCAT_FAILED", `socat stopped with ${how} before its pseudo-terminal was ready (${log().trim() || "no message"}); check the socat installation, or ${MISSING_HINT}`));
    });
  });
}
