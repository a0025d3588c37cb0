// Simulated tester speed: edges generated per second by the front-end model (charge phase,
// closed-form ring, exact threshold crossings, comparator and timer), and by the integrated
// nonlinear model.

import { referenceBoard } from "../../../host/src/sim/board-model.ts";
import { simulatePulse } from "../../../host/src/sim/front-end.ts";
import { Random } from "../../../host/src/sim/random.ts";
import { loadScenario } from "../../../host/src/sim/scenario.ts";
import type { BenchSection } from "./types.ts";

function rate(part: ReturnType<typeof loadScenario>["part"], drive: number, tank: number, charge_s: number, seconds: number): { edges_per_s: number; edges_per_pulse: number } {
  const board = referenceBoard();
  const rng = new Random(7);
  let edges = 0;
  let pulses = 0;
  const t0 = performance.now();
  while (performance.now() - t0 < seconds * 1000) {
    edges += simulatePulse(board, part, drive, tank, charge_s, 8192, rng, 16).edges.ticks.length;
    pulses++;
  }
  const s = (performance.now() - t0) / 1000;
  return { edges_per_s: edges / s, edges_per_pulse: edges / pulses };
}

export const simSection: BenchSection = {
  name: "sim",
  async run(progress) {
    const linear = rate(loadScenario("filter-coil-4m7").part, 1, 1, 300e-6, 2);
    progress(`linear: ${linear.edges_per_pulse.toFixed(0)} edges per pulse`);
    const saturating = rate(loadScenario("powder-toroid-47u").part, 0, 3, 1000e-6, 2);
    progress(`saturating core: ${saturating.edges_per_pulse.toFixed(0)} edges per pulse`);
    return {
      figures: {
        "sim.edges_per_s": linear.edges_per_s,
        "sim.edges_per_s_nonlinear": saturating.edges_per_s,
      },
      notes: {
        "sim.edges_per_s": `closed-form ring, ${linear.edges_per_pulse.toFixed(0)} edges per pulse (filter-coil-4m7, 100 Ω, 10 nF)`,
        "sim.edges_per_s_nonlinear": `integrated ring, ${saturating.edges_per_pulse.toFixed(0)} edges per pulse (powder-toroid-47u saturating, 10 Ω, 1 µF)`,
      },
    };
  },
};
