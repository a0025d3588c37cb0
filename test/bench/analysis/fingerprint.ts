// Fingerprint of the analysis's results, for changes that must not move them (speed work on the
// fitting core): a fixed set of captures is analysed and every number of each RingAnalysis (or
// the error it threw) is written with full precision (JSON keeps a double exactly), one line a
// capture, and hashed. Two runs agree bit for bit when the hashes agree; where they do not, the
// dumps' differing lines name the captures.
//
//   npx tsx test/bench/analysis/fingerprint.ts [--out DUMP] [--compare DUMP]
//
// The set: every grid point (grid.ts) at 12 seeds; the throughput set's six 500-edge parts at 10
// seeds; damaged captures (damage.ts: lost edges, glitch pairs) of every grid point at 2 seeds;
// and the realistic comparator (realistic.ts: first passage, rise/fall skew 0/10/33 ns,
// overdrive, noise at 1x and 3x, the board's timing prior) at 2 seeds per point and condition.

import { createHash } from "node:crypto";
import { readFileSync, writeFileSync } from "node:fs";
import { parseArgs } from "node:util";
import { analyzeRing, type RingInput } from "../../../host/src/analysis/index.ts";
import { modelEvaluations } from "../../../host/src/analysis/edge-model.ts";
import { Random } from "../../../host/src/sim/random.ts";
import { damage } from "./damage.ts";
import { captureOf, GRID, inputOf, preparePoint } from "./grid.ts";
import { conditionName, REAL_CONDITIONS, realCapture, realInput } from "./realistic.ts";
import { THROUGHPUT_EDGES } from "./throughput.ts";

interface Case {
  name: string;
  input: RingInput;
}

function* cases(): Generator<Case> {
  for (const g of GRID) {
    const pp = preparePoint(g);
    const periodTicks = (g.tick_hz * 2 * Math.PI) / pp.ring.wd_rad_s;
    for (let seed = 1; seed <= 12; seed++) yield { name: `grid ${g.name} ${seed}`, input: captureOf(pp, seed) };
    for (let seed = 1; seed <= 2; seed++) {
      const c = captureOf(pp, seed);
      const d = damage(Array.from(c.ticks), Array.from(c.levels), new Random(1_000_003 + seed), periodTicks);
      yield { name: `damaged ${g.name} ${seed}`, input: inputOf(pp, d.ticks, d.levels) };
    }
    for (const cond of REAL_CONDITIONS) {
      for (let seed = 1; seed <= 2; seed++) yield { name: `real ${g.name} ${conditionName(cond)} ${seed}`, input: realInput(pp, realCapture(pp, cond, seed)) };
    }
    if (g.max_edges >= THROUGHPUT_EDGES && !g.name.endsWith("-500")) {
      const cut = preparePoint({ ...g, max_edges: THROUGHPUT_EDGES });
      if (cut.times_s.length < THROUGHPUT_EDGES) continue;
      for (let i = 0; i < 10; i++) yield { name: `throughput ${g.name} ${5000 + i}`, input: captureOf(cut, 5000 + i) };
    }
  }
}

function resultLine(c: Case): string {
  try {
    return JSON.stringify({ case: c.name, result: analyzeRing(c.input) });
  } catch (e) {
    const err = e as { code?: string; message?: string };
    return JSON.stringify({ case: c.name, error: err.code ?? "uncoded", message: err.message ?? String(e) });
  }
}

const { values } = parseArgs({ options: { out: { type: "string" }, compare: { type: "string" } } });
const lines: string[] = [];
let failed = 0;
const e0 = modelEvaluations();
const t0 = process.cpuUsage();
for (const c of cases()) {
  const line = resultLine(c);
  if (line.includes('"error"')) failed++;
  lines.push(line);
}
const cpu = process.cpuUsage(t0);
const evaluations = modelEvaluations() - e0;
const dump = lines.join("\n") + "\n";
const hash = createHash("sha256").update(dump).digest("hex");
if (values.out) writeFileSync(values.out, dump);
process.stdout.write(
  `fingerprint ${hash}\ncaptures ${lines.length} (${failed} threw)\nevaluations ${evaluations} (${(evaluations / lines.length).toFixed(1)} per capture)\ncpu ${((cpu.user + cpu.system) / 1e6).toFixed(1)} s\n`,
);
if (values.compare) {
  const old = readFileSync(values.compare, "utf8").split("\n");
  let differ = 0;
  for (let i = 0; i < Math.max(old.length - 1, lines.length); i++) {
    if (old[i] === lines[i]) continue;
    differ++;
    if (differ <= 5) process.stdout.write(`differs: ${(lines[i] ?? old[i]).slice(0, 120)}\n`);
  }
  process.stdout.write(differ === 0 ? "identical to the dump compared\n" : `${differ} captures differ from the dump compared\n`);
  process.exitCode = differ === 0 ? 0 : 1;
}
