// Faulty or awkward parts on the clips. Each must end in a specific diagnosis with advice: a coded
// refusal, or a reading that carries the warning naming the condition; and where a number is
// still given, it must agree with the simulator's truth within its stated uncertainty.

import { describe, expect, it } from "vitest";
import { captureFromDevice } from "../../host/src/measure/capture-build.ts";
import { estimateFromReading } from "../../host/src/ranging/estimate.ts";
import { analyzeCapture, measurePart, MeasureError } from "../../host/src/measure/measure-part.ts";
import type { Reading } from "../../host/src/measure/measure-part.ts";
import { referenceBoard } from "../../host/src/sim/board-model.ts";
import type { BoardModel } from "../../host/src/sim/board-model.ts";
import { Random } from "../../host/src/sim/random.ts";
import { expectedReading } from "../../host/src/sim/front-end.ts";
import { loadScenario } from "../../host/src/sim/scenario.ts";
import type { PartModel } from "../../host/src/sim/scenario.ts";
import { caught, openRig as openFastRig } from "./sim-rig.ts";
import type { RigOptions } from "./sim-rig.ts";

// Nonlinear pulses (clamp, saturation) take the simulator a while to compute, and the reply timer
// runs on the host's clock while it does: a generous timeout here, since no line is ever lost.
const openRig = (o: RigOptions) => openFastRig({ ...o, client: { reply_timeout_ms: 10_000 } });

async function refusal(part: PartModel | null): Promise<MeasureError> {
  const rig = await openRig({ part, seed: 5 });
  const e = await caught(() => measurePart(rig.client, {}));
  await rig.close();
  expect(e).toBeInstanceOf(MeasureError);
  return e as MeasureError;
}

/** The reading's L against the circuit's truth on the setting it used, in units of its U (k = 2). */
function lError(r: Reading, part: PartModel, board: BoardModel, nominal_f: number): number {
  const truth = expectedReading(board, part, r.settings.drive, r.settings.tank, nominal_f).inductance_h;
  return Math.abs(r.analysis.inductance_h - truth) / r.analysis.inductance_u_h;
}

const codes = (r: Reading) => r.analysis.warnings.map((w) => w.code);

describe("part faults get a diagnosis, not a bare number", () => {
  it("open terminals: NO_RING, naming open clips", async () => {
    const e = await refusal(null);
    expect(e.code).toBe("NO_RING");
    expect(e.message).toMatch(/open/);
  });

  it("a plain resistor (overdamped): NO_RING, naming a resistor", async () => {
    const e = await refusal({ inductance_h: 50e-9, series_ohm: 47, self_capacitance_f: 0 });
    expect(e.code).toBe("NO_RING");
    expect(e.message).toMatch(/resistor/);
  });

  it("a short (20 nH, 5 mΩ): NO_SETTING, the ring too fast for every setting", async () => {
    const e = await refusal({ inductance_h: 20e-9, series_ohm: 0.005, self_capacitance_f: 0 });
    expect(e.code).toBe("NO_SETTING");
    expect(e.message).toMatch(/too fast|faster than the capture/);
  });

  it("a huge inductance whose ring outlasts the window: RING_TRUNCATED, L still within U", async () => {
    const part = { inductance_h: 20, series_ohm: 2, self_capacitance_f: 50e-12 };
    const rig = await openRig({ part, seed: 5 });
    const estimate = { l_h: 20, q_points: [{ q: 500, tank_f: 1e-7 }], fitted: false };
    const r = await measurePart(rig.client, { drive: 3, tank: 3, estimate });
    await rig.close();
    expect(r.capture.meta?.end_reason).toBe("timeout");
    expect(codes(r)).toContain("RING_TRUNCATED");
    expect(lError(r, part, referenceBoard(), 1e-6)).toBeLessThan(1);
  });

  it("a clipped first cycle: refused before the pulse by measurePart; forced through, SUSPECTED_CLIPPING", async () => {
    const part = { inductance_h: 1e-3, series_ohm: 0.5, self_capacitance_f: 0 };
    const rig = await openRig({ part, seed: 5 });
    const estimate = { l_h: 1e-3, q_points: [{ q: 300, tank_f: 1e-9 }], fitted: false };
    const e = await caught(() => measurePart(rig.client, { drive: 0, tank: 0, charge_us: 200, estimate }));
    expect((e as MeasureError).code).toBe("SETTING_UNSAFE");
    expect(rig.pulses()).toBe(0);
    // A host without that check (or a part worse than its estimate) pulses anyway: the clamp clips.
    const raw = await rig.client.measure({ drive: 0, tank: 0, charge_us: 200, edge_limit: 8192, timeout_ms: 1000, quiet_us: 2000 });
    expect(rig.link.sim.stats.peakRingV).toBeGreaterThan(referenceBoard().clamp_v);
    const a = analyzeCapture(captureFromDevice(raw, rig.client.identity, rig.client.profile, "test"));
    await rig.close();
    expect(a.warnings.map((w) => w.code)).toContain("SUSPECTED_CLIPPING");
    expect(a.warnings.find((w) => w.code === "SUSPECTED_CLIPPING")!.message).toMatch(/lower the drive current/);
    const truth = expectedReading(referenceBoard(), part, 0, 0, 1e-9).inductance_h;
    expect(Math.abs(a.inductance_h - truth)).toBeLessThan(a.inductance_u_h);
  });

  // A chattering fixture (a loose clip, a bouncing contact) makes the comparator toggle inside a
  // half-cycle: a pair of extra edges. Added to a real capture at seeded random places, so the
  // check does not depend on how the simulator models comparator noise.
  async function chattered(rate: number): Promise<{ a: () => ReturnType<typeof analyzeCapture>; truth_h: number }> {
    const part = { inductance_h: 1e-3, series_ohm: 1, self_capacitance_f: 0 };
    const s = { drive: 1, tank: 2, charge_us: 100, edge_limit: 8192, timeout_ms: 100, quiet_us: 500 };
    const rig = await openRig({ part, seed: 5 });
    const raw = await rig.client.measure(s);
    await rig.close();
    const rng = new Random(9);
    const ticks: number[] = [];
    const levels: number[] = [];
    for (let i = 0; i < raw.ticks.length; i++) {
      ticks.push(raw.ticks[i]);
      levels.push(raw.levels[i]);
      const next = raw.ticks[i + 1];
      if (next === undefined || rng.uniform() >= rate) continue;
      const t = raw.ticks[i] + Math.floor((next - raw.ticks[i]) * (0.2 + 0.6 * rng.uniform()));
      ticks.push(t, t + 3 + Math.floor(rng.uniform() * 20)); // 50-400 ns of bounce
      levels.push(1 - raw.levels[i], raw.levels[i]);
    }
    const capture = captureFromDevice({ ...raw, ticks, levels }, rig.client.identity, rig.client.profile, "test");
    return { a: () => analyzeCapture(capture), truth_h: expectedReading(referenceBoard(), part, s.drive, s.tank, 1e-7).inductance_h };
  }

  it("a chattering fixture (a bounce in 1 of 10 half-cycles): MANY_REJECTED with wiring advice, L within U", async () => {
    const { a, truth_h } = await chattered(0.1);
    const r = a();
    expect(r.warnings.map((w) => w.code)).toContain("MANY_REJECTED");
    expect(r.warnings.find((w) => w.code === "MANY_REJECTED")!.message).toMatch(/wiring|grounding/);
    expect(Math.abs(r.inductance_h - truth_h)).toBeLessThan(r.inductance_u_h);
  });

  it("a fixture chattering in 4 of 10 half-cycles: a coded refusal, no number", async () => {
    const { a } = await chattered(0.4);
    const e = await caught(async () => a());
    expect(e).toBeInstanceOf(MeasureError);
    expect(["NO_RING", "BAD_INPUT", "TOO_FEW_EDGES"]).toContain((e as MeasureError).code);
  });

  it("a saturating core: FREQUENCY_DRIFT naming saturation; driven hard, a coded refusal", async () => {
    const part = loadScenario("powder-toroid-47u").part;
    const rig = await openRig({ part, seed: 5 });
    // Automatic ranging notices the drift and steps down until the core no longer saturates.
    const auto = await measurePart(rig.client, {});
    expect(codes(auto)).not.toContain("FREQUENCY_DRIFT");
    // On a fixed, stronger setting (50 mA through 100 ohm into 100 nF) the drift is measured and named.
    const estimate = estimateFromReading(rig.client.profile, auto.settings, auto.analysis);
    const r = await measurePart(rig.client, { drive: 1, tank: 2, estimate });
    expect(codes(r)).toContain("FREQUENCY_DRIFT");
    expect(r.analysis.warnings.find((w) => w.code === "FREQUENCY_DRIFT")!.message).toMatch(/saturation/);
    // Far into saturation (0.5 A through 10 ohm into 1 uF) the ring is no damped sine at all.
    const raw = await rig.client.measure({ drive: 0, tank: 3, charge_us: 1000, edge_limit: 8192, timeout_ms: 1000, quiet_us: 2000 });
    const e = await caught(async () => analyzeCapture(captureFromDevice(raw, rig.client.identity, rig.client.profile, "test")));
    await rig.close();
    expect((e as MeasureError).code).toBe("NO_RING");
  });
});
