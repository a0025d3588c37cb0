// End-to-end readings on the in-process simulated tester (pulse, stream, analysis), measured side
// by side in one run:
// - a bench application that knows the part (fixed setting, estimate from a first reading: no
//   probe): readings per second against the physics-only limit of the same part and setting;
// - a fresh part each time (safe probe and automatic ranging): host CPU and pulses per reading.
// In-process the ring itself costs no wall time (the simulator jumps its clock over it), so a
// fixed-setting loop runs at the pace of the host's CPU and the firmware's rest; the simulated
// tester's own CPU is metered and taken out of the host figures.

import { listScenarios, loadScenario, measurePart, openTester } from "../../../host/src/index.ts";
import type { PartModel, Reading } from "../../../host/src/index.ts";
import { estimateFromReading } from "../../../host/src/ranging/estimate.ts";
import { rangingWork } from "../../../host/src/ranging/bound-cache.ts";
import { meterSim, physicsOnly, startMeter } from "./e2e-meter.ts";
import type { BenchSection } from "./types.ts";

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
const FIXED_READINGS = 40;
const RANGED_READINGS = 3;

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length === 0 ? NaN : s.length % 2 ? s[s.length >> 1] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};

interface PaceResult {
  ratio: number;
  /** Physics over (physics + the loop's wall time less the simulator's CPU), per reading. */
  board_ratio: number;
  per_s: number;
  physics_per_s: number;
  host_cpu_ms: number;
  gc_ms: number;
  allocated_mb: number;
  bounds: number;
}

async function paceOf(p: (typeof PACE_PARTS)[number], progress: (m: string) => void): Promise<PaceResult> {
  const t = await openTester({ part: p.part, seed: p.seed });
  try {
    const first = await measurePart(t.client);
    const estimate = estimateFromReading(t.client.profile, first.settings, first.analysis);
    const fixed = { drive: p.drive ?? first.settings.drive, tank: p.tank ?? first.settings.tank, estimate };
    let last = first;
    for (let i = 0; i < 3; i++) last = await measurePart(t.client, fixed); // warm
    const sim = meterSim(t.sim!);
    const work0 = rangingWork.bounds_computed;
    const m = startMeter();
    for (let i = 0; i < FIXED_READINGS; i++) last = await measurePart(t.client, fixed);
    const w = await m.stop();
    const per_s = FIXED_READINGS / (w.wall_ms / 1000);
    const phys = physicsOnly(p.part, p.seed, last.settings, last.analysis.fd_hz);
    // A board does in physics time what the simulator does on the host's CPU: its reading
    // would take the physics plus the host's share of the loop's wall time.
    const host_wall_s = (w.wall_ms - sim.cpu_ms()) / 1000 / FIXED_READINGS;
    const r: PaceResult = {
      ratio: per_s * phys.seconds, per_s, physics_per_s: 1 / phys.seconds, board_ratio: phys.seconds / (phys.seconds + host_wall_s),
      host_cpu_ms: (w.cpu_ms - sim.cpu_ms()) / FIXED_READINGS, gc_ms: w.gc_ms / FIXED_READINGS, allocated_mb: w.allocated_mb / FIXED_READINGS,
      bounds: (rangingWork.bounds_computed - work0) / FIXED_READINGS,
    };
    progress(`${p.name}: ${describe(last)}, ${phys.edges} edges, ${phys.bytes} bytes: physics ${(phys.seconds * 1e3).toFixed(2)} ms (${r.physics_per_s.toFixed(0)}/s), ` +
      `loop ${r.per_s.toFixed(0)}/s, ratio ${r.ratio.toFixed(2)} (board estimate ${r.board_ratio.toFixed(2)}); host CPU ${r.host_cpu_ms.toFixed(2)} ms, ` +
      `GC ${r.gc_ms.toFixed(2)} ms, ${r.allocated_mb.toFixed(2)} MB allocated, ${r.bounds} bounds computed per reading`);
    return r;
  } finally {
    await t.close();
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
    const pace: PaceResult[] = [];
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
        "e2e.physics_ratio_min": Math.min(...pace.map((p) => p.ratio)),
        "e2e.board_ratio_min": Math.min(...pace.map((p) => p.board_ratio)),
        "e2e.readings_per_s": drawer.per_s,
        "e2e.fixed_host_cpu_ms": median(pace.map((p) => p.host_cpu_ms)),
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
        "e2e.board_ratio_min": "estimate for a board: physics-only time over (physics + the loop's wall time less the simulator's CPU), per reading, minimum over the same parts",
        "e2e.readings_per_s": "in-process, 330 µH part known (fixed setting, no probe)",
        "e2e.fixed_host_cpu_ms": "host CPU per warm fixed-setting reading, simulated tester's CPU taken out, median over the pace parts",
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
