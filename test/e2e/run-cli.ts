// Runs the built CLI as a user would (node + bin script), capturing output and exit status.

import { spawnSync } from "node:child_process";
import { fileURLToPath } from "node:url";

export const CLI = fileURLToPath(new URL("../../host/bin/henrytick.js", import.meta.url));

export interface CliRun {
  status: number;
  stdout: string;
  stderr: string;
}

export function runCli(args: string[], cwd?: string): CliRun {
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: "utf8", cwd, timeout: 60_000 });
  if (r.error) throw r.error;
  return { status: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
}
