// The kill tests' child runner: starts a TypeScript child (through tsx) on a folder, waits until it
// prints "ready", lets it run `run_ms` and kills it with SIGKILL. Every wait is bounded; a child
// that exits by itself, or never gets ready, fails the test with its stderr.

import { spawn } from "node:child_process";
import { fileURLToPath } from "node:url";

const REPO = fileURLToPath(new URL("../../..", import.meta.url));

export function runAndKill(script: string, dir: string, run_ms: number, what = "writer"): Promise<void> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ["--import", "tsx", script, dir], { cwd: REPO, stdio: ["ignore", "pipe", "pipe"] });
    let err = "";
    const guard = setTimeout(() => {
      child.kill("SIGKILL");
      reject(new Error(`${what} did not start within 60 s: ${err}`));
    }, 60_000);
    child.stderr.on("data", (b) => (err += b));
    child.stdout.on("data", (b: Buffer) => {
      if (b.toString().includes("ready")) setTimeout(() => child.kill("SIGKILL"), run_ms);
    });
    child.on("exit", (code, signal) => {
      clearTimeout(guard);
      if (signal === "SIGKILL") resolve();
      else reject(new Error(`${what} exited by itself (code ${code}): ${err}`));
    });
  });
}
