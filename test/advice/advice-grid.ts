// Shared by the automatic-ranging tests and the advice benchmark: a grid of simulated parts from
// 1 µH to 100 mH with Q from about 2 to 500, and the two checks run on each: how the setting
// automatic ranging chose compares with the best of all allowed settings, and how well the
// predicted ring peak matches the simulated one.

import { measurePart, openTester } from "../../host/src/index.ts";
import type { PartModel, Reading } from "../../host/src/index.ts";
import { solveRing, stateAtOpening } from "../../host/src/physics/front-end-circuit.ts";
import { waveExtremum, waveValue } from "../../host/src/physics/ring-wave.ts";
import { adviseSettings } from "../../host/src/ranging/advice.ts";
import { estimateFromReading, refineEstimate } from "../../host/src/ranging/estimate.ts";
import { referenceBoard } from "../../host/src/sim/board-model.ts";
import { frontEndCircuit } from "../../host/src/sim/front-end.ts";

export interface GridPart {
  name: string;
  part: PartModel;
}

/** Q quoted at the 100 nF tank (series loss: Q = sqrt(L/C) / Rs; core loss: Rp / sqrt(L/C)). */
export const GRID: GridPart[] = [
  { name: "1 µH, Q 50 on 1 µF", part: { inductance_h: 1e-6, series_ohm: 0.02, self_capacitance_f: 1e-12 } },
  { name: "10 µH, Q 500", part: { inductance_h: 10e-6, series_ohm: 0.02, self_capacitance_f: 2e-12 } },
  { name: "100 µH, Q 2", part: { inductance_h: 100e-6, series_ohm: 15, self_capacitance_f: 3e-12 } },
  { name: "1 mH, Q 100", part: { inductance_h: 1e-3, series_ohm: 1, self_capacitance_f: 6e-12 } },
  { name: "10 mH, core loss, Q 3", part: { inductance_h: 10e-3, series_ohm: 1, parallel_ohm: 1000, self_capacitance_f: 15e-12 } },
  { name: "100 mH, Q 50", part: { inductance_h: 100e-3, series_ohm: 20, self_capacitance_f: 25e-12 } },
  { name: "100 mH, Q 2 at 1 nF", part: { inductance_h: 100e-3, series_ohm: 5000, self_capacitance_f: 25e-12 } },
];

export interface RegretResult {
  chosen: Reading | null;
  /** Why no reading was given, if none was. */
  refused: string | null;
  /** Chosen setting's measured u(L) over the smallest u(L) among all allowed settings tried. */
  regret: number;
  /** The same for u(Q)/Q, which the tank's tolerance does not swamp. */
  regret_q: number;
  /** Highest ring amplitude the simulated tester produced over every pulse, probes included. */
  max_ring_v: number;
  tried: number;
}

/** Automatic ranging, then every allowed setting by hand, on one simulated part. */
export async function rangingRegret(part: PartModel, seed = 11): Promise<RegretResult> {
  const t = await openTester({ part, seed });
  try {
    let chosen: Reading | null = null;
    let refused: string | null = null;
    try {
      chosen = await measurePart(t.client);
    } catch (e) {
      refused = `${(e as { code?: string }).code}: ${(e as Error).message}`;
    }
    let bestU = Infinity;
    let bestQ = Infinity;
    let tried = 0;
    if (chosen) {
      const est = estimateFromReading(t.client.profile, chosen.settings, chosen.analysis);
      for (const a of chosen.advice ?? []) {
        if (a.refused) continue;
        try {
          const r = await measurePart(t.client, { drive: a.drive, tank: a.tank, charge_us: a.charge_us, estimate: est });
          tried++;
          if (r.analysis.edges_used >= 20) {
            bestU = Math.min(bestU, r.analysis.inductance_u_h / r.analysis.inductance_h);
            bestQ = Math.min(bestQ, r.analysis.q_u / r.analysis.q);
          }
        } catch {
          // a setting that gives no usable ring does not compete
        }
      }
    }
    const chosenU = chosen ? chosen.analysis.inductance_u_h / chosen.analysis.inductance_h : Infinity;
    const chosenQ = chosen ? chosen.analysis.q_u / chosen.analysis.q : Infinity;
    return {
      chosen, refused, regret: Number.isFinite(bestU) ? chosenU / bestU : 1, regret_q: Number.isFinite(bestQ) ? chosenQ / bestQ : 1,
      max_ring_v: t.sim!.stats.peakRingV, tried,
    };
  } finally {
    await t.close();
  }
}

/**
 * Predicted first ring peak against the simulated tester's for every setting of the profile,
 * predictions made from fitted readings on two tanks (one Q cannot tell series from core loss,
 * which move the ring in opposite directions across tanks). Returns the largest relative error.
 * Settings where the drive resistor and the switch node's capacitance (a pole the host does not
 * model) shape the first peak, R Csw > T/50, are left out: they carry the smallest currents.
 */
export async function peakPredictionError(part: PartModel, seed = 5): Promise<{ max_rel_error: number; compared: number; no_reading?: string }> {
  const t = await openTester({ part, seed });
  try {
    let reading: Reading;
    try {
      reading = await measurePart(t.client);
    } catch (e) {
      return { max_rel_error: 0, compared: 0, no_reading: String((e as { code?: string }).code) };
    }
    const profile = t.client.profile;
    let est = estimateFromReading(profile, reading.settings, reading.analysis);
    const other = (reading.advice ?? []).find((a) => a.refused === "" && a.tank !== reading.settings.tank);
    if (other) {
      const second = await measurePart(t.client, { drive: other.drive, tank: other.tank, charge_us: other.charge_us, estimate: est });
      est = refineEstimate(est, estimateFromReading(profile, second.settings, second.analysis));
    }
    const board = referenceBoard();
    let worst = 0;
    let compared = 0;
    // Every setting the advice would allow apart from the peak limit itself.
    for (const p of adviseSettings(profile, est, { max_peak_v: 1e9, min_ticks_per_period: 40 })) {
      if (p.refused) continue;
      const circuit = frontEndCircuit(board, part, p.drive, p.tank);
      let wave;
      try {
        wave = solveRing(circuit, stateAtOpening(circuit, board.switch_on_ohm, board.diode_v, p.charge_us * 1e-6));
      } catch {
        continue; // overdamped: no peak to compare
      }
      const peaks = [0, 1, 2, 3].map((n) => waveExtremum(wave, n)).filter((x) => x > 0).map((x) => waveValue(wave, x));
      const simPeak = Math.max(...peaks);
      if (!(simPeak > 0.1)) continue; // only rings worth predicting
      if (board.drive_ohm[p.drive] * board.switch_node_f > 1 / (50 * p.f_hz)) continue;
      worst = Math.max(worst, Math.abs(p.peak_v / simPeak - 1));
      compared++;
    }
    return { max_rel_error: worst, compared };
  } finally {
    await t.close();
  }
}
