// `henrytick sim-device` as a separate process, for tests that reach the simulated tester over a
// pseudo-terminal: start it, wait for the device path it prints, and stop every one started.

import { spawn } from "node:child_process";
import type { ChildProcessByStdio } from "node:child_process";
import type { Readable } from "node:stream";
import { CLI } from "./run-cli.ts";

export interface RunningDevice {
  child: ChildProcessByStdio<null, Readable, Readable>;
  /** The pseudo-terminal the device serves. */
  path: string;
  stdout: () => string;
  stderr: () => string;
  exited: Promise<number | null>;
}

/** Starts and tracks sim-device processes; `stopAll` ends them (SIGTERM, SIGKILL after 5 s). */
export class SimDevices {
  private readonly children: RunningDevice[] = [];

  /** Starts the built CLI's sim-device with `args` and resolves once it has printed the path. */
  start(args: string[]): Promise<RunningDevice> {
    const child = spawn(process.execPath, [CLI, "sim-device", ...args], { stdio: ["ignore", "pipe", "pipe"] });
    let out = "";
    let err = "";
    child.stdout.setEncoding("utf8").on("data", (s: string) => (out += s));
    child.stderr.setEncoding("utf8").on("data", (s: string) => (err += s));
    const exited = new Promise<number | null>((resolve) => child.on("exit", (code) => resolve(code)));
    return new Promise((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error(`sim-device printed no path within 20 s: ${err}`)), 20_000);
      child.stdout.on("data", () => {
        const nl = out.indexOf("\n");
        if (nl < 0) return;
        clearTimeout(timer);
        const device = { child, path: out.slice(0, nl), stdout: () => out, stderr: () => err, exited };
        this.children.push(device);
        resolve(device);
      });
      void exited.then((code) => reject(new Error(`sim-device exited with ${code} before printing a path: ${err}`)));
    });
  }

  async stopAll(): Promise<void> {
    for (const d of this.children) {
      if (d.child.exitCode === null && d.child.signalCode === null) d.child.kill("SIGTERM");
      const killer = setTimeout(() => d.child.kill("SIGKILL"), 5000);
      await d.exited;
      clearTimeout(killer);
    }
  }
}
