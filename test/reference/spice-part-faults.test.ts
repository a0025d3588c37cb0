// Part faults judged on ring-downs from an independent circuit solver: ngspice (Debian package
// "ngspice") rings the docs/method.md §1 circuit with a winding whose flux saturates (a cubic
// law i = phi/L + k phi³, not the simulator's own saturation model) and, separately, a linear
// part driven into a clamp across the ring. The edges come from a plain hysteresis comparator
// (+35 mV / -5 mV, half a tick of jitter, 64 MHz), the capture is judged as `measure` judges it.
//
// - Saturation: the frequency falls through the ring; the refusal must quote the swing of L
//   that the ngspice record shows, 2 Δf/f between its first and its last period (L ∝ 1/f²,
//   docs/method.md §1), within 20 % (the first period averages over a cycle, so the swing at
//   the first edge is somewhat larger), and never suspect clipping: the ring stays at 5 V, far
//   below any clamp.
// - Clipping: a 50 V ring (1 mH, 20 Ω on 1 nF) on a 36 V clamp is still suspected and refused as a clipped first cycle.

import { describe, expect, it } from "vitest";
import { judgeCapture, PartFaultError } from "../../host/src/measure/measure-part.ts";
import { hasNgspice, hysteresisEdges, spiceCapture, spiceRing, upwardZeroCrossings } from "./spice.ts";
import type { SpiceRingPart, SpiceRun } from "./spice.ts";

const TICK_HZ = 64e6;
const VH = 0.035;
const VL = -0.005;
const PROFILE = { clamp_v: 36, max_timeout_ms: 1000 };
const SEEDS = 20;

const peak = (r: SpiceRun) => r.v_v.reduce((m, v) => Math.max(m, v), -Infinity);

/** 2 Δf/f from the record's first full period to its last (positive: L rises as the ring decays). */
function spiceLSwing(r: SpiceRun): number {
  const z = upwardZeroCrossings(r);
  const first = z[1] - z[0];
  const last = z[z.length - 1] - z[z.length - 2];
  return 2 * (last / first - 1);
}

function judged(ring: SpiceRun, c_f: number, seed: number) {
  const capture = spiceCapture(hysteresisEdges(ring, VH, VL, TICK_HZ, seed), { tick_hz: TICK_HZ, tank_c_f: c_f, thresholds_v: [VH, VL] });
  try {
    return { reading: judgeCapture(capture, PROFILE), fault: null };
  } catch (e) {
    if (!(e instanceof PartFaultError)) throw e;
    return { reading: e.suspect!, fault: e };
  }
}

const SATURATING: (SpiceRingPart & { name: string })[] = [
  { name: "1 mH, 1 Ω on 100 nF, k = 4e9 A/Wb³ (about -3 300 ppm)", l_h: 1e-3, rs_ohm: 1, c_f: 100e-9, i0_a: 0.05, cubic_a_per_wb3: 4e9 },
  { name: "1 mH, 1 Ω on 100 nF, k = 1e9 A/Wb³ (about -850 ppm)", l_h: 1e-3, rs_ohm: 1, c_f: 100e-9, i0_a: 0.05, cubic_a_per_wb3: 1e9 },
];

const title = "part faults on ngspice ring-downs" + (hasNgspice ? "" : " (skipped: Debian package ngspice not installed)");

describe.skipIf(!hasNgspice)(title, () => {
  it.each(SATURATING)("saturating $name: CORE_SATURATING quotes the swing ngspice shows, no clipping suspected", (p) => {
    const ring = spiceRing(p);
    const truth = spiceLSwing(ring);
    expect(peak(ring)).toBeLessThan(6);
    for (let seed = 1; seed <= SEEDS; seed++) {
      const { reading, fault } = judged(ring, p.c_f, seed);
      expect(reading.analysis.warnings.map((w) => w.code)).not.toContain("SUSPECTED_CLIPPING");
      expect(fault?.code).toBe("CORE_SATURATING");
      const quoted = Number(/L swings by ([\d.]+) %/.exec(fault!.message)![1]) / 100;
      expect(quoted / Math.abs(truth)).toBeGreaterThan(0.9);
      expect(quoted / Math.abs(truth)).toBeLessThan(1.2);
      expect(fault!.message).toMatch(/falls by/);
    }
  });

  it("a 50 V ring on a 36 V clamp: SUSPECTED_CLIPPING and FIRST_CYCLE_CLIPPED", () => {
    const p: SpiceRingPart = { l_h: 1e-3, rs_ohm: 20, c_f: 1e-9, i0_a: 0.05, clamp_v: 36 };
    const ring = spiceRing(p);
    expect(peak(ring)).toBeLessThan(38);
    for (let seed = 1; seed <= 5; seed++) {
      const { reading, fault } = judged(ring, p.c_f, seed);
      expect(reading.analysis.warnings.map((w) => w.code)).toContain("SUSPECTED_CLIPPING");
      expect(fault?.code).toBe("FIRST_CYCLE_CLIPPED");
    }
  });
});
