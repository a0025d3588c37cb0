// Runs the built CLI as a user would (node + bin script), capturing output and exit status.

import { spawnSync } from "node:child_process";
import { mkdtempSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";

export const CLI = fileURLToPath(new URL("../../host/bin/henrytick.js", import.meta.url));

export interface CliRun {
  status: number;
  stdout: string;
  stderr: string;
}

/** A private, empty configuration folder: a developer's own calibration never reaches the tests. */
export const TEST_CONFIG_DIR = mkdtempSync(join(tmpdir(), "henrytick-config-"));

export function runCli(args: string[], cwd?: string): CliRun {
  const env = { ...process.env, HENRYTICK_CONFIG_DIR: TEST_CONFIG_DIR };
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: "utf8", cwd, env, timeout: 60_000 });
  if (r.error) throw r.error;
  return { status: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
}
