// Simulated tester speed: edges generated per second by the front-end model (charge phase,
// closed-form ring, comparator decisions by first passage of ring + continuous noise, timer), the
// same ring with the per-crossing noise model (one noise value per crossing: the cost before the
// comparator physics, measured in the same run so the ratio is fair on a shared machine), and the
// integrated nonlinear model. The first passage's work per edge (waveform evaluations and noise
// draws) is deterministic and reported beside the times.

import { referenceBoard, type BoardModel } from "../../../host/src/sim/board-model.ts";
import { physicalEdges, ringWaveform } from "../../../host/src/sim/comparator-physics.ts";
import { frontEndCircuit, simulatePulse } from "../../../host/src/sim/front-end.ts";
import { solveRing, stateAtOpening } from "../../../host/src/physics/front-end-circuit.ts";
import { Random } from "../../../host/src/sim/random.ts";
import { loadScenario } from "../../../host/src/sim/scenario.ts";
import type { BenchSection } from "./types.ts";

type Part = ReturnType<typeof loadScenario>["part"];

function rate(board: BoardModel, part: Part, drive: number, tank: number, charge_s: number, seconds: number): { edges_per_s: number; edges_per_pulse: number } {
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

/** Deterministic work of the first-passage comparator per decision, over 20 seeds of one ring. */
function workPerDecision(board: BoardModel, part: Part, drive: number, tank: number, charge_s: number): { evaluations: number; draws: number } {
  const circuit = frontEndCircuit(board, part, drive, tank);
  const wave = solveRing(circuit, stateAtOpening(circuit, board.switch_on_ohm, board.diode_v, charge_s));
  const work = { decisions: 0, evaluations: 0, draws: 0 };
  const comp = { ...board.comparator, noise_bw_hz: board.comparator.noise_bw_hz ?? Infinity };
  for (let s = 0; s < 20; s++) physicalEdges(ringWaveform(wave), comp, board.timer, new Random(s), { max_edges: 8192, window_s: 16, work });
  return { evaluations: work.evaluations / work.decisions, draws: work.draws / work.decisions };
}

export const simSection: BenchSection = {
  name: "sim",
  async run(progress) {
    const coil = loadScenario("filter-coil-4m7").part;
    const ref = referenceBoard();
    const board = { ...ref, comparator: { ...ref.comparator, noise_model: "first-passage" as const } };
    const perCrossingBoard = { ...ref, comparator: { ...ref.comparator, noise_model: "per-crossing" as const } };
    // Interleaved, so both see the same machine load.
    const fp: number[] = [];
    const pc: number[] = [];
    let perPulse = 0;
    for (let round = 0; round < 3; round++) {
      const a = rate(board, coil, 1, 1, 300e-6, 0.7);
      const b = rate(perCrossingBoard, coil, 1, 1, 300e-6, 0.7);
      fp.push(a.edges_per_s);
      pc.push(b.edges_per_s);
      perPulse = a.edges_per_pulse;
    }
    const linear = Math.max(...fp);
    const perCrossing = Math.max(...pc);
    progress(`linear: ${perPulse.toFixed(0)} edges per pulse, first passage ${linear.toFixed(0)}/s, per crossing ${perCrossing.toFixed(0)}/s`);
    const work = workPerDecision(board, coil, 1, 1, 300e-6);
    const saturating = rate(ref, loadScenario("powder-toroid-47u").part, 0, 3, 1000e-6, 2);
    progress(`saturating core: ${saturating.edges_per_pulse.toFixed(0)} edges per pulse`);
    return {
      figures: {
        "sim.edges_per_s": linear,
        "sim.edges_per_s_per_crossing": perCrossing,
        "sim.first_passage_cost_ratio": perCrossing / linear,
        "sim.first_passage_evaluations_per_edge": work.evaluations,
        "sim.first_passage_draws_per_edge": work.draws,
        "sim.edges_per_s_nonlinear": saturating.edges_per_s,
      },
      notes: {
        "sim.edges_per_s": `closed-form ring, first-passage comparator, ${perPulse.toFixed(0)} edges per pulse (filter-coil-4m7, 100 Ω, 10 nF); best of 3 interleaved rounds`,
        "sim.edges_per_s_per_crossing": "the same ring with one noise value per crossing (the model before first passage)",
        "sim.first_passage_cost_ratio": "time per edge, first passage / per crossing (goal about 3 or less)",
        "sim.first_passage_evaluations_per_edge": "waveform evaluations per comparator decision, 20 seeds (deterministic)",
        "sim.first_passage_draws_per_edge": "Gaussian draws of the noise path per decision, 20 seeds (deterministic)",
        "sim.edges_per_s_nonlinear": `integrated ring, ${saturating.edges_per_pulse.toFixed(0)} edges per pulse (powder-toroid-47u saturating, 10 Ω, 1 µF)`,
      },
    };
  },
};
