// End-to-end readings on the simulated tester (pulse, stream, analysis), measured side by side in
// one run:
// - a bench application that knows the part (fixed setting, estimate from a first reading: no
//   probe): readings per second in-process against the physics-only limit of the same part and
//   setting, and the same loop on the tester paced as a board (e2e-board.ts), one pulse at a time
//   and with the next pulse under way while the last capture is analysed (repeatReadings);
// - a fresh part each time (safe probe and automatic ranging): host CPU and pulses per reading.
// In-process the ring itself costs no wall time (the simulator jumps its clock over it), so a
// fixed-setting loop runs at the pace of the host's CPU and the simulator's; the simulated
// tester's own CPU is metered and taken out of the host figures. docs/performance.md says how
// each figure is computed.

import { judgeCapture, listScenarios, loadScenario, MeasureError, measurePart, openTester, repeatReadings } from "../../../host/src/index.ts";
import type { PartModel, Reading } from "../../../host/src/index.ts";
import { estimateFromReading } from "../../../host/src/ranging/estimate.ts";
import { rangingWork } from "../../../host/src/ranging/bound-cache.ts";
import { modelEvaluations } from "../../../host/src/analysis/edge-model.ts";
import { SimTester } from "../../../host/src/sim/sim-tester.ts";
import { meterSim, physicsOnly, startMeter } from "./e2e-meter.ts";
import { connectPaced } from "./e2e-board.ts";
import type { BenchSection } from "./types.ts";
import { loadavg } from "node:os";

/**
 * The parts of the pace figures: three on the settings named for them (drive index: 0 = 10 ohm,
 * 1 = 100 ohm, 2 = 1 kohm; tank 2 = 100 nF), and two on the setting automatic ranging picks.
 */
const PACE_PARTS: { name: string; part: PartModel; seed: number; drive?: number; tank?: number }[] = [
  { name: "4.7 µH", part: { inductance_h: 4.7e-6, series_ohm: 0.05, self_capacitance_f: 2e-12 }, seed: 47, drive: 0, tank: 2 },
  { name: "330 µH (drawer-choke-330u)", part: loadScenario("drawer-choke-330u").part, seed: 330, drive: 1, tank: 2 },
  { name: "47 mH", part: { inductance_h: 47e-3, series_ohm: 30, self_capacitance_f: 20e-12 }, seed: 4700, drive: 2, tank: 2 },
  { name: "1.2 µH (loop-antenna-1u2)", part: loadScenario("loop-antenna-1u2").part, seed: 12 },
  { name: "82 mH (solenoid-valve-82m)", part: loadScenario("solenoid-valve-82m").part, seed: 82 },
];
/** Readings of every pace part before any is measured: the process's code is compiled by then. */
const WARM_READINGS = 30;
const FIXED_READINGS = 100;
/** Readings per loop on the tester paced as a board (each loop after 5 of its own to warm up). */
const PACED_READINGS = 60;
const RANGED_READINGS = 3;

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length === 0 ? NaN : s.length % 2 ? s[s.length >> 1] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};

interface PaceResult {
  ratio: number;
  /** Physics over (physics + the loop's wall time less the simulator's CPU), per reading: an estimate. */
  board_ratio: number;
  /** Physics times the readings per second on the tester paced as a board: one pulse at a time, and overlapped. */
  paced_ratio: number;
  overlap_ratio: number;
  /** The board estimate from CPU time: physics / (physics + host CPU), and physics / max(physics, host CPU) when overlapped. */
  cpu_ratio: number;
  overlap_cpu_ratio: number;
  per_s: number;
  physics_per_s: number;
  host_cpu_ms: number;
  sim_cpu_ms: number;
  /** CPU of the analysis and part-fault judgement of the loop's captures (judgeCapture), per reading. */
  analysis_cpu_ms: number;
  gc_ms: number;
  allocated_mb: number;
  bounds: number;
  edges: number;
  bytes: number;
  evaluations: number;
  /** Readings of the in-process loop the tester or the part-fault judgement refused (counted in the rate). */
  refused: number;
}

/**
 * A reading, or null when the tester or the judgement refused it (a MeasureError): a refused
 * reading took its pulse and its analysis too, so the loops count it and go on.
 */
async function attempt(read: () => Promise<Reading>): Promise<Reading | null> {
  try {
    return await read();
  } catch (e) {
    if (e instanceof MeasureError) return null;
    throw e;
  }
}

/** Every pace part read WARM_READINGS times on its fixed setting, so that no part's figures pay for compiling the code. */
async function warmUp(): Promise<void> {
  for (const p of PACE_PARTS) {
    const t = await openTester({ part: p.part, seed: p.seed });
    try {
      const first = await measurePart(t.client);
      const estimate = estimateFromReading(t.client.profile, first.settings, first.analysis);
      const fixed = { drive: p.drive ?? first.settings.drive, tank: p.tank ?? first.settings.tank, estimate };
      for (let i = 0; i < WARM_READINGS; i++) await attempt(() => measurePart(t.client, fixed));
      for await (const _ of repeatReadings(t.client, { after: first, ...fixed, count: 10 })) void _;
    } finally {
      await t.close();
    }
  }
}

async function paceOf(p: (typeof PACE_PARTS)[number], progress: (m: string) => void): Promise<PaceResult> {
  const t = await openTester({ part: p.part, seed: p.seed });
  let last: Reading;
  let w: Awaited<ReturnType<ReturnType<typeof startMeter>["stop"]>>;
  let simCpu: number;
  let work0: number;
  let bounds: number;
  let evaluations: number;
  const captures: Reading["capture"][] = [];
  let refused = 0;
  let fixed: { drive: number; tank: number; estimate: ReturnType<typeof estimateFromReading> };
  try {
    const first = await measurePart(t.client);
    const estimate = estimateFromReading(t.client.profile, first.settings, first.analysis);
    fixed = { drive: p.drive ?? first.settings.drive, tank: p.tank ?? first.settings.tank, estimate };
    last = first;
    for (let i = 0; i < 3; i++) last = (await attempt(() => measurePart(t.client, fixed))) ?? last; // warm
    const sim = meterSim(t.sim!);
    work0 = rangingWork.bounds_computed;
    const e0 = modelEvaluations();
    const m = startMeter();
    for (let i = 0; i < FIXED_READINGS; i++) {
      const r = await attempt(() => measurePart(t.client, fixed));
      if (!r) {
        refused++;
        continue;
      }
      last = r;
      captures.push(last.capture);
    }
    w = await m.stop();
    simCpu = sim.cpu_ms();
    bounds = (rangingWork.bounds_computed - work0) / FIXED_READINGS;
    evaluations = (modelEvaluations() - e0) / FIXED_READINGS;
  } finally {
    await t.close();
  }
  // The host's analysis share: the same captures analysed and judged again, alone.
  const c0 = process.cpuUsage();
  for (const c of captures) judgeCapture(c, undefined, { keep_suspect: true });
  const cj = process.cpuUsage(c0);
  const analysis_cpu_ms = (cj.user + cj.system) / 1000 / captures.length;

  const per_s = FIXED_READINGS / (w.wall_ms / 1000);
  const phys = physicsOnly(p.part, p.seed, last.settings, last.analysis.fd_hz);
  // A board does in physics time what the simulator does on the host's CPU: its reading
  // would take the physics plus the host's share of the loop's wall time.
  const host_wall_s = (w.wall_ms - simCpu) / 1000 / FIXED_READINGS;
  const host_cpu_s = (w.cpu_ms - simCpu) / 1000 / FIXED_READINGS;
  const paced = await pacedOf(p, fixed);
  const r: PaceResult = {
    ratio: per_s * phys.seconds, per_s, physics_per_s: 1 / phys.seconds, board_ratio: phys.seconds / (phys.seconds + host_wall_s),
    paced_ratio: paced.sequential_per_s * phys.seconds, overlap_ratio: paced.overlap_per_s * phys.seconds,
    cpu_ratio: phys.seconds / (phys.seconds + host_cpu_s), overlap_cpu_ratio: phys.seconds / Math.max(phys.seconds, host_cpu_s),
    host_cpu_ms: (w.cpu_ms - simCpu) / FIXED_READINGS, sim_cpu_ms: simCpu / FIXED_READINGS, analysis_cpu_ms,
    gc_ms: w.gc_ms / FIXED_READINGS, allocated_mb: w.allocated_mb / FIXED_READINGS,
    bounds, edges: phys.edges, bytes: phys.bytes, evaluations, refused,
  };
  progress(`${p.name}: ${describe(last)}, ${phys.edges} edges, ${phys.bytes} bytes: physics ${(phys.seconds * 1e3).toFixed(2)} ms (${r.physics_per_s.toFixed(0)}/s), ` +
    `in-process loop ${r.per_s.toFixed(0)}/s, ratio ${r.ratio.toFixed(2)} (board estimate ${r.board_ratio.toFixed(2)}); ` +
    `CPU estimate ${r.cpu_ratio.toFixed(2)} (overlapped ${r.overlap_cpu_ratio.toFixed(2)}); paced as a board ${paced.sequential_per_s.toFixed(0)}/s (ratio ${r.paced_ratio.toFixed(2)}), overlapped ${paced.overlap_per_s.toFixed(0)}/s (ratio ${r.overlap_ratio.toFixed(2)}); ` +
    `host CPU ${r.host_cpu_ms.toFixed(2)} ms (analysis and judgement ${r.analysis_cpu_ms.toFixed(2)} ms), simulator ${r.sim_cpu_ms.toFixed(2)} ms, ` +
    `GC ${r.gc_ms.toFixed(2)} ms, ${r.allocated_mb.toFixed(2)} MB allocated, ${r.evaluations.toFixed(0)} model evaluations, ${r.bounds} bounds computed per reading${refused ? `; ${refused} of ${FIXED_READINGS} readings refused` : ""}`);
  return r;
}

/** Readings per second of the fixed-setting loop on the tester paced as a board, one pulse at a time and overlapped. */
async function pacedOf(p: (typeof PACE_PARTS)[number], fixed: { drive: number; tank: number; estimate: ReturnType<typeof estimateFromReading> }): Promise<{ sequential_per_s: number; overlap_per_s: number }> {
  const { client } = await connectPaced(new SimTester({ part: p.part, seed: p.seed }));
  try {
    const first = await measurePart(client);
    for (let i = 0; i < 5; i++) await attempt(() => measurePart(client, fixed));
    let t0 = performance.now();
    for (let i = 0; i < PACED_READINGS; i++) await attempt(() => measurePart(client, fixed));
    const sequential_per_s = PACED_READINGS / ((performance.now() - t0) / 1000);
    for await (const _ of repeatReadings(client, { after: first, ...fixed, count: 5 })) void _;
    let n = 0;
    t0 = performance.now();
    for await (const _ of repeatReadings(client, { after: first, ...fixed, count: PACED_READINGS })) n++;
    const overlap_per_s = n / ((performance.now() - t0) / 1000);
    return { sequential_per_s, overlap_per_s };
  } finally {
    await client.close();
  }
}

function describe(r: Reading): string {
  return `drive ${r.settings.drive}, tank ${r.settings.tank}, charge ${r.settings.charge_us} µs`;
}

async function rangedOf(scenario: string): Promise<{ cpu_ms: number[]; total_cpu_ms: number[]; pulses: number[]; bounds: number[]; wall_ms: number[] } | null> {
  const t = await openTester({ scenario });
  try {
    try {
      await measurePart(t.client); // warm; a part the tester refuses is left out
    } catch {
      return null;
    }
    const sim = meterSim(t.sim!);
    const out = { cpu_ms: [] as number[], total_cpu_ms: [] as number[], pulses: [] as number[], bounds: [] as number[], wall_ms: [] as number[] };
    for (let i = 0; i < RANGED_READINGS; i++) {
      const p0 = t.sim!.stats.pulses;
      const s0 = sim.cpu_ms();
      const b0 = rangingWork.bounds_computed;
      const m = startMeter();
      await measurePart(t.client);
      const w = await m.stop();
      out.total_cpu_ms.push(w.cpu_ms);
      out.cpu_ms.push(w.cpu_ms - (sim.cpu_ms() - s0));
      out.wall_ms.push(w.wall_ms);
      out.pulses.push(t.sim!.stats.pulses - p0);
      out.bounds.push(rangingWork.bounds_computed - b0);
    }
    return out;
  } finally {
    await t.close();
  }
}

export const e2eSection: BenchSection = {
  name: "e2e",
  async run(progress) {
    const load = loadavg()[0];
    const pace: PaceResult[] = [];
    await warmUp();
    for (const p of PACE_PARTS) pace.push(await paceOf(p, progress));
    const cpu: number[] = [];
    const totalCpu: number[] = [];
    const pulses: number[] = [];
    const bounds: number[] = [];
    const wall: number[] = [];
    const left: string[] = [];
    for (const name of listScenarios()) {
      const r = await rangedOf(name);
      if (!r) {
        left.push(name);
        continue;
      }
      cpu.push(median(r.cpu_ms));
      totalCpu.push(median(r.total_cpu_ms));
      pulses.push(median(r.pulses));
      bounds.push(median(r.bounds));
      wall.push(median(r.wall_ms));
      progress(`${name}: ranged reading host CPU ${median(r.cpu_ms).toFixed(1)} ms (with the simulator ${median(r.total_cpu_ms).toFixed(1)} ms), ` +
        `${median(r.pulses)} pulses, ${median(r.bounds)} bounds computed, wall ${median(r.wall_ms).toFixed(0)} ms`);
    }
    const drawer = pace[1];
    return {
      figures: {
        "e2e.load_average": load,
        "e2e.physics_ratio_min": Math.min(...pace.map((p) => p.ratio)),
        "e2e.board_ratio_min": Math.min(...pace.map((p) => p.board_ratio)),
        "e2e.board_cpu_ratio_min": Math.min(...pace.map((p) => p.cpu_ratio)),
        "e2e.board_overlap_cpu_ratio_min": Math.min(...pace.map((p) => p.overlap_cpu_ratio)),
        "e2e.board_paced_ratio_min": Math.min(...pace.map((p) => p.paced_ratio)),
        "e2e.board_overlap_ratio_min": Math.min(...pace.map((p) => p.overlap_ratio)),
        "e2e.readings_per_s": drawer.per_s,
        "e2e.fixed_host_cpu_ms": median(pace.map((p) => p.host_cpu_ms)),
        "e2e.fixed_host_cpu_ms_max": Math.max(...pace.map((p) => p.host_cpu_ms)),
        "e2e.fixed_analysis_cpu_ms": median(pace.map((p) => p.analysis_cpu_ms)),
        "e2e.fixed_sim_cpu_ms": median(pace.map((p) => p.sim_cpu_ms)),
        "e2e.fixed_evaluations_per_reading": Math.max(...pace.map((p) => p.evaluations)),
        "e2e.fixed_refused": pace.reduce((a, p) => a + p.refused, 0),
        "e2e.fixed_gc_ms": median(pace.map((p) => p.gc_ms)),
        "e2e.fixed_allocated_mb": median(pace.map((p) => p.allocated_mb)),
        "e2e.fixed_bounds_per_reading": Math.max(...pace.map((p) => p.bounds)),
        "e2e.ranged_reading_cpu_ms": median(cpu),
        "e2e.ranged_reading_total_cpu_ms": median(totalCpu),
        "e2e.ranged_pulses_median": median(pulses),
        "e2e.ranged_bounds_median": median(bounds),
        "e2e.ranged_readings_per_s": 1000 / median(wall),
      },
      notes: {
        "e2e.physics_ratio_min": `fixed-setting readings/s over the physics-only limit (charge + ring + quiet + USB full-speed transfer of the stream), minimum over ${PACE_PARTS.map((p) => p.name).join(", ")}; goal >= 0.5`,
        "e2e.board_ratio_min": "estimate for a board: physics-only time over (physics + the in-process loop's wall time less the simulator's CPU), per reading, minimum over the same parts",
        "e2e.board_cpu_ratio_min": "estimate for a board from CPU time, which other processes on the machine do not inflate: physics over (physics + host CPU per reading), minimum over the same parts",
        "e2e.board_overlap_cpu_ratio_min": "the same when the host works while the tester pulses (repeatReadings): physics over max(physics, host CPU per reading)",
        "e2e.load_average": "the machine's 1-minute load average as the section started (2 cores): the wall-clock figures above fall with it, the CPU figures much less",
        "e2e.board_paced_ratio_min": `the same loop on the simulated tester paced as a board (lines delivered after charge + ring + quiet, then at the USB rate; simulator CPU off the clock), one pulse at a time: readings/s times the physics-only time, minimum over the same parts (${PACED_READINGS} readings each)`,
        "e2e.board_overlap_ratio_min": "the same with repeatReadings: the next pulse started before the last capture is analysed",
        "e2e.readings_per_s": "in-process, 330 µH part known (fixed setting, no probe)",
        "e2e.fixed_host_cpu_ms": `host CPU per warm fixed-setting reading, simulated tester's CPU taken out, median over the pace parts (${FIXED_READINGS} readings each, after ${WARM_READINGS} of every part)`,
        "e2e.fixed_host_cpu_ms_max": "the same, most over the pace parts",
        "e2e.fixed_analysis_cpu_ms": "of it, the analysis and part-fault judgement (judgeCapture on the loop's captures again), median over the pace parts",
        "e2e.fixed_sim_cpu_ms": "simulated tester's CPU per reading (ring, comparator, firmware), median over the pace parts: what a board spends instead",
        "e2e.fixed_evaluations_per_reading": "per-edge model evaluations per fixed-setting reading (deterministic), most over the pace parts",
        "e2e.fixed_refused": `fixed-setting readings of the in-process loops refused (a MeasureError: a part fault, no usable ring), of ${FIXED_READINGS * PACE_PARTS.length}; they count in the rates`,
        "e2e.fixed_gc_ms": "GC pause time per warm fixed-setting reading (simulator included), median over the pace parts",
        "e2e.fixed_allocated_mb": "bytes allocated per warm fixed-setting reading (freed by GC + heap growth, simulator included), median",
        "e2e.fixed_bounds_per_reading": "Cramér-Rao bounds of ranging predictions computed per warm fixed-setting reading, most over the pace parts",
        "e2e.ranged_reading_cpu_ms": `host CPU per automatic-ranging reading of an unknown part (probe included, simulated tester's CPU taken out), median over ${cpu.length} demo parts${left.length ? ` (${left.join(", ")} refused, left out)` : ""}; goal <= 40`,
        "e2e.ranged_reading_total_cpu_ms": "the same with the simulated tester's CPU",
        "e2e.ranged_pulses_median": "pulses per automatic-ranging reading (probe included), median over the demo parts",
        "e2e.ranged_bounds_median": "Cramér-Rao bounds computed for predictions per automatic-ranging reading, median over the demo parts",
        "e2e.ranged_readings_per_s": "in-process, each reading with its own safe probe and automatic ranging (median wall time over the demo parts)",
      },
    };
  },
};
