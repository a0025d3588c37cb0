// The emulated board as a serial device: the firmware's C build with the emulated-board port
// (firmware/ports/qemu-f405) running on QEMU's STM32F405 machine, its host link on a
// pseudo-terminal that a host opens exactly as it opens hardware, and its front end answered by
// the edge server (qemu-edge-server.ts) on QEMU's second serial port.
//
// QEMU runs with `-icount shift=4,sleep=off`: emulated time advances by executed instructions
// (16 ns each) and jumps to the next timer deadline whenever the core sleeps, so a measurement's
// waits take no real time and happen at the same emulated instants on every run. While the port
// is idle it stops its timer, so emulated time stands still, and it adds the host time that
// passed when the host speaks again (the edge server tells it): idle time follows the host's
// clock, as a real chip's crystal does.
//
// QEMU is started through a small shell that ends it when this process's pipe to the shell
// closes, so a host that dies without cleaning up (SIGKILL, crash) leaves no emulator behind.

import { spawn, spawnSync } from "node:child_process";
import type { ChildProcessByStdio } from "node:child_process";
import { existsSync, mkdtempSync, readdirSync, rmSync, statSync } from "node:fs";
import { connect } from "node:net";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import type { Readable, Writable } from "node:stream";
import { CodedError } from "../coded-error.ts";
import type { BoardModel } from "./board-model.ts";
import { firmwareWasmPath } from "./firmware-image.ts";
import { EdgeServer } from "./qemu-edge-server.ts";
import type { LinkFault } from "./qemu-edge-server.ts";
import type { PartModel } from "./scenario.ts";

export type QemuDeviceErrorCode =
  | "QEMU_MISSING" | "QEMU_FAILED" | "QEMU_NO_PTY" | "QEMU_EXITED" | "PORT_SILENT"
  | "EMULATED_IMAGE_MISSING" | "EMULATED_BUILD_FAILED" | "EDGE_SERVER_FAILED";

/** A failure to start or keep the emulated board; `code` is stable, the message ends with a next step. */
export class QemuDeviceError extends CodedError<QemuDeviceErrorCode> {}

export type EmulatedCore = "m0" | "m4";
export const EMULATED_CORES: readonly EmulatedCore[] = ["m0", "m4"];
const QEMU_CPU: Record<EmulatedCore, string> = { m0: "cortex-m0", m4: "cortex-m4" };

export interface QemuDeviceOptions {
  core: EmulatedCore;
  /** The port's ELF image; default the source checkout's build (see emulatedImage). */
  elf?: string;
  board: BoardModel;
  part: PartModel | null;
  seed: number;
  /** Break the front-end link on purpose (tests of the port's fault path). */
  fault?: LinkFault;
  /** qemu-system-arm executable. Default "qemu-system-arm", looked up on PATH. */
  qemu?: string;
  /** Longest wait for QEMU's pseudo-terminal and the port's first front-end frame, ms. Default 20000. */
  start_timeout_ms?: number;
}

const PTY_NOTICE = /char device redirected to (\/dev\/pts\/\d+) \(label serial0\)/;
const QEMU_HINT = "install the Debian package qemu-system-arm (sudo apt-get install qemu-system-arm; elsewhere your system's QEMU with ARM system emulation), then run this again";
/** Ends QEMU when its stdin (our pipe) closes; exits with QEMU's status when QEMU ends first. */
// (A background job's stdin is /dev/null unless redirected explicitly: hence fd 3.)
const SUPERVISOR = 'exe="$1"; shift; exec 3<&0; "$exe" "$@" </dev/null & q=$!; (cat <&3 >/dev/null; kill $q 2>/dev/null) & wait $q';

type Supervisor = ChildProcessByStdio<Writable, Readable, Readable>;

export class QemuDevice {
  /** The pseudo-terminal a host opens, e.g. /dev/pts/3. */
  readonly path: string;
  readonly core: EmulatedCore;
  readonly elf: string;
  readonly edges: EdgeServer;
  /** Settles when the device stops: null after close(), an error if QEMU or the edge server failed. */
  readonly stopped: Promise<QemuDeviceError | null>;
  private finish: (outcome: QemuDeviceError | null) => void = () => {};
  private closing = false;

  private constructor(private readonly proc: Supervisor, private readonly dir: string, path: string, core: EmulatedCore, elf: string, edges: EdgeServer, log: () => string) {
    this.path = path;
    this.core = core;
    this.elf = elf;
    this.edges = edges;
    this.stopped = new Promise((resolve) => (this.finish = resolve));
    proc.on("exit", (code, signal) => {
      void edges.close();
      rmSync(dir, { recursive: true, force: true });
      if (this.closing) return this.finish(null);
      const how = signal ? `signal ${signal}` : `status ${code}`;
      this.finish(new QemuDeviceError("QEMU_EXITED", `QEMU stopped with ${how} (${tail(log()) || "no message"}); start the emulated board again`));
    });
  }

  /** Starts the edge server and QEMU, waits for the pseudo-terminal and for the port's front-end link to be up. */
  static async start(opts: QemuDeviceOptions): Promise<QemuDevice> {
    if (!Number.isInteger(opts.seed)) throw new TypeError('"seed" must be an integer');
    const elf = opts.elf ?? emulatedImage(opts.core);
    const dir = mkdtempSync(join(tmpdir(), "henrytick-qemu-"));
    const edges = new EdgeServer({ board: opts.board, part: opts.part, seed: opts.seed, fault: opts.fault });
    let edgeError: Error | null = null;
    try {
      await edges.listen(join(dir, "front-end.sock"), (e) => (edgeError = e));
    } catch (e) {
      rmSync(dir, { recursive: true, force: true });
      throw new QemuDeviceError("EDGE_SERVER_FAILED", `cannot listen on ${join(dir, "front-end.sock")}: ${(e as Error).message}; check that ${tmpdir()} is writable`);
    }
    const exe = opts.qemu ?? "qemu-system-arm";
    const args = [
      "-M", "netduinoplus2", "-cpu", QEMU_CPU[opts.core], "-display", "none", "-kernel", elf,
      "-serial", "pty", "-serial", `unix:${join(dir, "front-end.sock")}`,
      "-monitor", `unix:${join(dir, "monitor.sock")},server=on,wait=off`,
      "-icount", "shift=4,sleep=off",
    ];
    const proc = spawn("sh", ["-c", SUPERVISOR, "sh", exe, ...args], { stdio: ["pipe", "pipe", "pipe"], detached: true });
    proc.stdin.on("error", () => {});
    let log = "";
    const collect = (s: string) => (log = (log + s).slice(-4000));
    proc.stdout.setEncoding("utf8").on("data", collect);
    proc.stderr.setEncoding("utf8").on("data", collect);
    try {
      const path = await waitForStart(proc, edges, exe, () => log, () => edgeError, opts.start_timeout_ms ?? 20_000);
      return new QemuDevice(proc, dir, path, opts.core, elf, edges, () => log);
    } catch (e) {
      await edges.close();
      rmSync(dir, { recursive: true, force: true });
      throw e;
    }
  }

  /** Stops QEMU (the pseudo-terminal disappears) and the edge server. Safe to call twice. */
  async close(): Promise<void> {
    if (!this.closing) {
      this.closing = true;
      if (this.proc.exitCode === null && this.proc.signalCode === null) {
        const killer = setTimeout(() => killGroup(this.proc, "SIGKILL"), 3000);
        killGroup(this.proc, "SIGTERM");
        await this.stopped;
        clearTimeout(killer);
      }
    }
    await this.stopped;
  }

  /** Reads `count` 32-bit words of the emulated chip's memory through QEMU's monitor. */
  readWords(address: number, count: number): Promise<number[]> {
    return monitorCommand(join(this.dir, "monitor.sock"), `xp /${count}wx 0x${address.toString(16)}`).then((text) => {
      const words: number[] = [];
      for (const line of text.split("\n")) {
        const m = /^[0-9a-f]+:((?:\s+0x[0-9a-f]+)+)/i.exec(line.trim());
        if (m) for (const w of m[1].trim().split(/\s+/)) words.push(Number(w));
      }
      if (words.length !== count) throw new QemuDeviceError("QEMU_FAILED", `QEMU's monitor returned ${words.length} of ${count} words at 0x${address.toString(16)}; check the QEMU version (7.2 is known to work)`);
      return words;
    });
  }

  /** A port variable's value (a 32-bit symbol of the ELF, e.g. ht_qemu_gate). */
  async readVariable(name: string): Promise<number> {
    return (await this.readWords(elfSymbol(this.elf, name), 1))[0];
  }

  /**
   * Bytes of the C stack used so far: the start-up code paints the stack region, so the deepest
   * word no longer holding the paint marks the high-water point.
   */
  async stackHighWater(): Promise<number> {
    const bottom = elfSymbol(this.elf, "_sstack");
    const top = elfSymbol(this.elf, "_estack");
    const words = await this.readWords(bottom, (top - bottom) / 4);
    const first = words.findIndex((w) => w !== STACK_PAINT);
    return first < 0 ? 0 : top - (bottom + 4 * first);
  }
}

/** The start-up code's stack paint (firmware/ports/qemu-f405/startup.c). */
export const STACK_PAINT = 0x5afe57ac;

function killGroup(p: Supervisor, signal: NodeJS.Signals): void {
  try {
    if (p.pid !== undefined) process.kill(-p.pid, signal);
  } catch {
    // already gone
  }
}

function tail(log: string): string {
  return log.trim().split("\n").slice(-2).join(" / ");
}

/** Resolves with the pseudo-terminal once QEMU reported it and the port's link is up (HELLO answered, first TIME sync). */
function waitForStart(proc: Supervisor, edges: EdgeServer, exe: string, log: () => string, edgeError: () => Error | null, timeout_ms: number): Promise<string> {
  return new Promise((resolve, reject) => {
    let settled = false;
    const done = (err: QemuDeviceError | null, path?: string) => {
      if (settled) return;
      settled = true;
      clearTimeout(timer);
      clearInterval(poll);
      if (err) {
        killGroup(proc, "SIGKILL");
        reject(err);
      } else resolve(path!);
    };
    const poll = setInterval(() => {
      const e = edgeError();
      if (e) return done(new QemuDeviceError("EDGE_SERVER_FAILED", `the edge server failed: ${e.message}; report this with the scenario and seed`));
      // The port syncs its clock right after its HELLO was answered: the link works both ways.
      const m = PTY_NOTICE.exec(log());
      if (m && edges.stats.time_syncs > 0) done(null, m[1]);
    }, 20);
    const timer = setTimeout(() => {
      const m = PTY_NOTICE.exec(log());
      if (!m) done(new QemuDeviceError("QEMU_NO_PTY", `QEMU did not report a pseudo-terminal within ${timeout_ms} ms (${tail(log()) || "no message"}); check that /dev/pts is mounted and that you may create terminals`));
      else done(new QemuDeviceError("PORT_SILENT", `the emulated board sent nothing on its front-end link within ${timeout_ms} ms; rebuild its image (npm run build:emulated -w firmware) and try again`));
    }, timeout_ms);
    proc.on("exit", (code) => {
      if (code === 127) done(new QemuDeviceError("QEMU_MISSING", `${exe} was not found; the emulated board needs QEMU: ${QEMU_HINT}`));
      else done(new QemuDeviceError("QEMU_FAILED", `QEMU stopped with status ${code} before the board was up (${tail(log()) || "no message"}); check the QEMU installation, or ${QEMU_HINT}`));
    });
  });
}

/** True when qemu-system-arm can be run. */
export function hasQemu(exe = "qemu-system-arm"): boolean {
  return spawnSync(exe, ["--version"], { stdio: "ignore" }).status === 0;
}

/** One monitor command's output (QEMU's human monitor on a unix socket). */
function monitorCommand(socketPath: string, command: string): Promise<string> {
  return new Promise((resolve, reject) => {
    const s = connect(socketPath);
    let text = "";
    let sent = false;
    const timer = setTimeout(() => {
      s.destroy();
      reject(new QemuDeviceError("QEMU_FAILED", `QEMU's monitor did not answer "${command}" within 10 s; start the emulated board again`));
    }, 10_000);
    s.setEncoding("utf8");
    s.on("data", (chunk: string) => {
      text += chunk;
      if (!text.endsWith("(qemu) ")) return;
      if (!sent) {
        sent = true;
        text = "";
        s.write(command + "\n");
        return;
      }
      clearTimeout(timer);
      s.end();
      // The monitor echoes the command line (with terminal escapes) before the output.
      resolve(text.replace(/\x1b\[[0-9;]*[A-Za-z]/g, ""));
    });
    s.on("error", (e) => {
      clearTimeout(timer);
      reject(new QemuDeviceError("QEMU_FAILED", `cannot reach QEMU's monitor: ${e.message}; start the emulated board again`));
    });
  });
}

/** A symbol's address in an ELF image, from the cross toolchain's nm. */
function elfSymbol(elf: string, name: string): number {
  const r = spawnSync("arm-none-eabi-nm", [elf], { encoding: "utf8" });
  if (r.status !== 0) throw new QemuDeviceError("QEMU_FAILED", `cannot list the symbols of ${elf} (arm-none-eabi-nm: ${r.error?.message ?? r.stderr.trim()}); install the Debian package gcc-arm-none-eabi`);
  const line = r.stdout.split("\n").find((l) => l.trim().split(/\s+/)[2] === name);
  if (!line) throw new QemuDeviceError("QEMU_FAILED", `${elf} has no symbol ${name}; rebuild it (npm run build:emulated -w firmware)`);
  return parseInt(line.trim().split(/\s+/)[0], 16);
}

/**
 * The emulated board's image in a source checkout (firmware/build/native/qemu-f405-<core>.elf),
 * built first when missing or older than the firmware wasm or the port's sources. An installed package carries no C
 * toolchain inputs, so there the image must be given.
 */
export function emulatedImage(core: EmulatedCore): string {
  const firmware = dirname(dirname(firmwareWasmPath()));
  const builder = join(firmware, "ports", "native-build.ts");
  if (!existsSync(builder)) {
    throw new QemuDeviceError("EMULATED_IMAGE_MISSING", "the emulated board's image is built from a henrytick source checkout; clone the repository, run npm install there, and start it from the checkout");
  }
  const elf = join(firmware, "build", "native", `qemu-f405-${core}.elf`);
  const inputs = [firmwareWasmPath(), ...["qemu-f405", "runtime"].flatMap((d) => readdirSync(join(firmware, "ports", d)).map((f) => join(firmware, "ports", d, f)))];
  if (existsSync(elf) && inputs.every((f) => existsSync(f) && statSync(f).mtimeMs <= statSync(elf).mtimeMs)) return elf;
  const r = spawnSync("npm", ["run", "--silent", "build:emulated", "-w", "firmware", "--", core], { cwd: dirname(firmware), encoding: "utf8" });
  if (r.status !== 0 || !existsSync(elf)) {
    throw new QemuDeviceError("EMULATED_BUILD_FAILED", `building the emulated board's image failed (${(r.stderr || r.stdout || r.error?.message || "").trim().split("\n").slice(-3).join(" / ")}); install the Debian packages wabt, gcc-arm-none-eabi and libnewlib-arm-none-eabi, then run this again`);
  }
  return elf;
}
