// Reading rate over a pseudo-terminal: `henrytick sim-device` in its own process (as a user runs
// it, so the simulated firmware and the host's analysis run side by side like tester and PC),
// the host in this process through the real serial stack. Same fixed setting as the in-process
// figure in e2e.ts, so the two differ only by the link.

import { spawn, spawnSync } from "node:child_process";
import { existsSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { openTester } from "../../../host/src/index.ts";
import { knownPartReadingsPerS } from "./known-part.ts";
import type { BenchFigures, BenchSection } from "./types.ts";

const KEY = "e2e.readings_per_s_pty";
const CLI = fileURLToPath(new URL("../../../host/bin/henrytick.js", import.meta.url));
const BUILT_CLI = fileURLToPath(new URL("../../../host/dist/cli/main.js", import.meta.url));

interface Device {
  path: string;
  stop(): Promise<void>;
}

/** Starts the built CLI's sim-device and waits for the one line it prints: the device path. */
function startDevice(scenario: string): Promise<Device> {
  const child = spawn(process.execPath, [CLI, "sim-device", scenario], { stdio: ["ignore", "pipe", "pipe"] });
  const exited = new Promise<void>((resolve) => child.on("exit", () => resolve()));
  const stop = async () => {
    if (child.exitCode === null && child.signalCode === null) child.kill("SIGTERM");
    await exited;
  };
  let out = "";
  let err = "";
  child.stderr.setEncoding("utf8").on("data", (s: string) => (err += s));
  return new Promise((resolve, reject) => {
    child.stdout.setEncoding("utf8").on("data", (s: string) => {
      out += s;
      if (out.includes("\n")) resolve({ path: out.slice(0, out.indexOf("\n")), stop });
    });
    void exited.then(() => reject(new Error(`sim-device stopped before printing a path: ${err.trim()}`)));
  });
}

function notMeasured(why: string): { figures: BenchFigures; notes: Record<string, string> } {
  return { figures: { [KEY]: null, [`${KEY}_overlap`]: null }, notes: { [KEY]: `not measured: ${why}`, [`${KEY}_overlap`]: `not measured: ${why}` } };
}

export const ptySection: BenchSection = {
  name: "pty",
  async run(progress) {
    if (spawnSync("socat", ["-V"], { stdio: "ignore" }).status !== 0) return notMeasured("Debian package socat not installed");
    if (!existsSync(BUILT_CLI)) return notMeasured("host not built (npm run build)");
    const device = await startDevice("drawer-choke-330u");
    try {
      const t = await openTester({ port: device.path });
      try {
        // One pass of both loops first: the child's code is compiled by then (the first pass ran
        // at about half the rate of the second).
        const n = 20;
        await knownPartReadingsPerS(t.client, n);
        const known = await knownPartReadingsPerS(t.client, n);
        progress(`${n} fixed-setting readings over ${device.path} in ${known.seconds.toFixed(2)} s (${known.per_s.toFixed(0)}/s), overlapped ${known.overlap_per_s.toFixed(0)}/s`);
        const m = 50;
        const t1 = performance.now();
        for (let i = 0; i < m; i++) await t.client.identify();
        const roundTrip_ms = (performance.now() - t1) / m;
        return {
          figures: { [KEY]: known.per_s, [`${KEY}_overlap`]: known.overlap_per_s, "pty.command_round_trip_ms": roundTrip_ms },
          notes: {
            [KEY]: "sim-device child process via socat pseudo-terminal, fixed setting with the part known (no probe), one pulse at a time (measurePart in a loop)",
            [`${KEY}_overlap`]: "the same readings with repeatReadings: the next pulse under way (in the child process) while the host analyses the last capture",
            "pty.command_round_trip_ms": "ID command to OK over the pseudo-terminal (host, serial stack, socat, simulated firmware)",
          },
        };
      } finally {
        await t.close();
      }
    } finally {
      await device.stop();
    }
  },
};
