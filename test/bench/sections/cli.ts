// Start-up cost of the command line: CPU time of one `node host/bin/henrytick.js` run (the
// child's own user + system time, read by a preloaded meter at its exit), for `--help` and for a
// simulated `measure` of the default demo part, each the median of a few runs. Beside them, the
// deterministic counts: how many of the package's files (host/bin, host/dist) and of the serial
// stack's (node_modules/@serialport) each run loads. Runs the built CLI (`npm run build` first).

import { spawnSync } from "node:child_process";
import { existsSync, mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import type { BenchFigures, BenchSection } from "./types.ts";

const CLI = fileURLToPath(new URL("../../../host/bin/henrytick.js", import.meta.url));
const HOST = fileURLToPath(new URL("../../../host/", import.meta.url));
const METER = fileURLToPath(new URL("./cli-child-meter.mjs", import.meta.url));
const RUNS = { help: 7, measure: 3 };

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[s.length >> 1] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};

interface Run {
  cpu_ms: number;
  /** URLs of the modules loaded, when counted. */
  loaded: string[];
}

function runCli(args: string[], work: string, count: boolean): Run {
  const cpuFile = join(work, "cpu.json");
  const loadFile = join(work, "loaded.txt");
  rmSync(cpuFile, { force: true });
  const env: NodeJS.ProcessEnv = { ...process.env, NO_COLOR: "1", HENRYTICK_CONFIG_DIR: join(work, "config"), HENRYTICK_BENCH_CPU_FILE: cpuFile };
  if (count) env.HENRYTICK_BENCH_LOAD_FILE = loadFile;
  else delete env.HENRYTICK_BENCH_LOAD_FILE;
  const r = spawnSync(process.execPath, ["--import", METER, CLI, ...args], { encoding: "utf8", env, cwd: work });
  if (r.status !== 0) throw new Error(`henrytick ${args.join(" ")} exited ${r.status}: ${r.stderr}`);
  return {
    cpu_ms: JSON.parse(readFileSync(cpuFile, "utf8")).cpu_ms,
    loaded: count ? readFileSync(loadFile, "utf8").split("\n").filter(Boolean) : [],
  };
}

function counts(loaded: string[]) {
  const files = loaded.filter((u) => u.startsWith("file:")).map((u) => fileURLToPath(u));
  return {
    host: files.filter((f) => f.startsWith(join(HOST, "bin")) || f.startsWith(join(HOST, "dist"))).length,
    serial: files.filter((f) => f.includes(`${join("node_modules", "@serialport")}`)).length,
  };
}

export const cliSection: BenchSection = {
  name: "cli",
  async run(progress) {
    if (!existsSync(join(HOST, "dist", "cli", "main.js"))) {
      const why = "host/dist is missing (run npm run build)";
      return { figures: { "cli.help_cpu_ms": null, "cli.measure_cpu_ms": null }, notes: { "cli.help_cpu_ms": why, "cli.measure_cpu_ms": why } };
    }
    const work = mkdtempSync(join(tmpdir(), "henrytick-bench-cli-"));
    try {
      const figures: BenchFigures = {};
      const notes: Record<string, string> = {};
      for (const [name, args] of [["help", ["--help"]], ["measure", ["measure", "--sim", "--seed", "1"]]] as const) {
        const c = counts(runCli([...args], work, true).loaded);
        const cpu: number[] = [];
        for (let i = 0; i < RUNS[name]; i++) cpu.push(runCli([...args], work, false).cpu_ms);
        progress(`${args.join(" ")}: ${cpu.map((x) => x.toFixed(0)).join(", ")} ms CPU; ${c.host} package files, ${c.serial} serial-stack files`);
        figures[`cli.${name}_cpu_ms`] = median(cpu);
        notes[`cli.${name}_cpu_ms`] = `CPU of one \`node host/bin/henrytick.js ${args.join(" ")}\`, median of ${RUNS[name]}`;
        figures[`cli.${name}_host_files`] = c.host;
        notes[`cli.${name}_host_files`] = "package files (host/bin, host/dist) the run loads";
        figures[`cli.${name}_serial_files`] = c.serial;
        notes[`cli.${name}_serial_files`] = "serial-stack files (node_modules/@serialport) the run loads";
      }
      return { figures, notes };
    } finally {
      rmSync(work, { recursive: true, force: true });
    }
  },
};
