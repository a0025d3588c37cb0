// The skew calibration against simulated rings of one reference part through the physical
// comparator (host/src/sim/comparator-physics.ts) with a known rise/fall delay difference.

import { describe, expect, it } from "vitest";
import { ringOfQ } from "../physics/ring.ts";
import { physicalEdges, ringWaveform } from "../sim/comparator-physics.ts";
import { Random } from "../sim/random.ts";
import type { RingInput } from "../analysis/index.ts";
import { fitSkew } from "./skew-fit.ts";

const TH: [number, number] = [0.035, -0.005];

/** A demo reference coil, 100 µH Q 60, on tank c_f, with rising edges `skew_s` late. */
function ring(c_f: number, skew_s: number, seed: number): RingInput {
  const { ring: r } = ringOfQ(100e-6, c_f, 60, 1);
  const e = physicalEdges(ringWaveform(r), {
    rising_v: TH[0], falling_v: TH[1], delay_rise_s: 45e-9 + skew_s, delay_fall_s: 45e-9, jitter_s: 2e-9, noise_v: 0.3e-3, noise_bw_hz: 2e6,
  }, { tick_hz: 64e6, ppm: 0, dead_time_s: 0 }, new Random(seed), { max_edges: 5000, window_s: 5 / r.alpha_per_s });
  return { tick_hz: 64e6, ticks: e.ticks, levels: e.levels, tank_c_f: c_f, thresholds_v: TH, ring_ended: true };
}

describe("comparator skew calibration", () => {
  it("recovers a 20 ns skew from rings on two tanks (159 and 503 kHz), within its uncertainty", () => {
    const inputs = [1, 2].flatMap((s) => [ring(10e-9, 20e-9, s), ring(1e-9, 20e-9, 10 + s)]);
    const f = fitSkew(inputs, { noise_bw_hz: 2e6, noise_v: 0.3e-3 });
    expect(f.rings).toHaveLength(4);
    expect(Math.abs(f.skew_s - 20e-9)).toBeLessThan(3 * f.u_skew_s);
    expect(f.u_skew_s).toBeLessThan(3e-9);
    // No skew: none found.
    const z = fitSkew([ring(10e-9, 0, 3), ring(1e-9, 0, 4)], { noise_bw_hz: 2e6, noise_v: 0.3e-3 });
    expect(Math.abs(z.skew_s)).toBeLessThan(3 * z.u_skew_s);
  });

  it("refuses rings of one frequency, which cannot tell a skew from a threshold error", () => {
    expect(() => fitSkew([ring(10e-9, 20e-9, 1), ring(10e-9, 20e-9, 2)])).toThrow(expect.objectContaining({ code: "TWO_TANKS_UNAVAILABLE" }));
  });
});
