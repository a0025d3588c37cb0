// Faulty or awkward parts on the clips. Each must end in a specific diagnosis with advice: a coded
// refusal that gives no number. A part fault found in a ring that still fits (part-fault.ts) is a
// PartFaultError carrying the would-be reading; with keep_suspect that reading is returned marked
// suspect, and it must then agree with the simulator's truth within its stated uncertainty.
// Mild cases that still read correctly keep their reading and their warning.

import { describe, expect, it } from "vitest";
import { captureFromDevice } from "../../host/src/measure/capture-build.ts";
import { estimateFromReading } from "../../host/src/ranging/estimate.ts";
import { analyzeCapture, judgeCapture, measurePart, MeasureError, PartFaultError } from "../../host/src/measure/measure-part.ts";
import type { PartFaultCode, Reading } from "../../host/src/measure/measure-part.ts";
import { openTester } from "../../host/src/open-tester.ts";
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

/** A part-fault refusal: its code, a message naming the diagnosis and the advice, and no result. */
function partFault(e: unknown, code: PartFaultCode, diagnosis: RegExp, advice: RegExp): PartFaultError {
  expect(e).toBeInstanceOf(PartFaultError);
  const f = e as PartFaultError;
  expect(f.code).toBe(code);
  expect(f.message).toMatch(diagnosis);
  expect(f.message).toMatch(advice);
  return f;
}

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

  it("a short (20 nH, 5 mΩ): PART_SHORTED, naming a short and what to check", async () => {
    const e = await refusal({ inductance_h: 20e-9, series_ohm: 0.005, self_capacitance_f: 0 });
    const f = partFault(e, "PART_SHORTED", /looks like a short/, /clips .* do not touch each other.*marked value/);
    expect(f.message).toMatch(/below the 1 µH/);
    expect(f.suspect).toBeUndefined(); // nothing rang on a capturable setting: no number at all
    // The opt-in has nothing to give either.
    const rig = await openRig({ part: { inductance_h: 20e-9, series_ohm: 0.005, self_capacitance_f: 0 }, seed: 5 });
    const again = await caught(() => measurePart(rig.client, { keep_suspect: true }));
    await rig.close();
    expect((again as MeasureError).code).toBe("PART_SHORTED");
  });

  it("a huge inductance whose ring outlasts the window: RING_OUTLASTS_WINDOW; kept on request, L within U", async () => {
    const part = { inductance_h: 20, series_ohm: 2, self_capacitance_f: 50e-12 };
    const rig = await openRig({ part, seed: 5 });
    const estimate = { l_h: 20, q_points: [{ q: 500, tank_f: 1e-7 }], fitted: false };
    const f = partFault(await caught(() => measurePart(rig.client, { drive: 3, tank: 3, estimate })),
      "RING_OUTLASTS_WINDOW", /outlasts the capture.*1000 ms window/, /automatic ranging.*charge_us/);
    expect(f.suspect!.capture.meta?.end_reason).toBe("timeout");
    expect(codes(f.suspect!)).toContain("RING_TRUNCATED");
    const r = await measurePart(rig.client, { drive: 3, tank: 3, estimate, keep_suspect: true });
    await rig.close();
    expect(r.suspect?.code).toBe("RING_OUTLASTS_WINDOW");
    expect(codes(r)).toContain("RING_TRUNCATED");
    expect(lError(r, part, referenceBoard(), 1e-6)).toBeLessThan(1);
  });

  it("a clipped first cycle: refused before the pulse by measurePart; pulsed anyway, FIRST_CYCLE_CLIPPED", async () => {
    const part = { inductance_h: 1e-3, series_ohm: 0.5, self_capacitance_f: 0 };
    const rig = await openRig({ part, seed: 5 });
    const estimate = { l_h: 1e-3, q_points: [{ q: 300, tank_f: 1e-9 }], fitted: false };
    const e = await caught(() => measurePart(rig.client, { drive: 0, tank: 0, charge_us: 200, estimate }));
    expect((e as MeasureError).code).toBe("SETTING_UNSAFE");
    expect(rig.pulses()).toBe(0);
    // A host without that check (or a part worse than its estimate) pulses anyway: the clamp clips.
    const raw = await rig.client.measure({ drive: 0, tank: 0, charge_us: 200, edge_limit: 8192, timeout_ms: 1000, quiet_us: 2000 });
    expect(rig.link.sim.stats.peakRingV).toBeGreaterThan(referenceBoard().clamp_v);
    const capture = captureFromDevice(raw, rig.client.identity, rig.client.profile, "test");
    const profile = rig.client.profile;
    await rig.close();
    const f = partFault(await caught(async () => judgeCapture(capture, profile)), "FIRST_CYCLE_CLIPPED", /first cycle was clipped.*36 V clamp/, /lower the drive current/);
    expect(codes(f.suspect!)).toContain("SUSPECTED_CLIPPING");
    const kept = judgeCapture(capture, profile, { keep_suspect: true });
    expect(kept.suspect?.code).toBe("FIRST_CYCLE_CLIPPED");
    const truth = expectedReading(referenceBoard(), part, 0, 0, 1e-9).inductance_h;
    expect(Math.abs(kept.analysis.inductance_h - truth)).toBeLessThan(kept.analysis.inductance_u_h);
  });

  // A chattering fixture (a loose clip, a bouncing contact) makes the comparator toggle inside a
  // half-cycle: a pair of extra edges. Added to a real capture at seeded random places, so the
  // check does not depend on how the simulator models comparator noise.
  async function chattered(rate: number) {
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
    const profile = rig.client.profile;
    return {
      read: (keep_suspect = false) => judgeCapture(capture, profile, { keep_suspect }),
      truth_h: expectedReading(referenceBoard(), part, s.drive, s.tank, 1e-7).inductance_h,
    };
  }

  it("a fixture chattering in 2-5 % of half-cycles: rejected silently, the reading stands", async () => {
    for (const rate of [0.02, 0.05]) {
      const { read, truth_h } = await chattered(rate);
      const r = read();
      expect(r.suspect).toBeUndefined();
      expect(r.analysis.edges_rejected).toBeGreaterThan(0);
      expect(codes(r)).not.toContain("MANY_REJECTED");
      expect(Math.abs(r.analysis.inductance_h - truth_h)).toBeLessThan(r.analysis.inductance_u_h);
    }
  });

  it("a chattering fixture (a bounce in 1 of 10 half-cycles): FIXTURE_CHATTER; kept on request, L within U", async () => {
    const { read, truth_h } = await chattered(0.1);
    const f = partFault(await caught(async () => read()), "FIXTURE_CHATTER", /fixture chatters/, /check the clips and the fixture's contacts/i);
    expect(codes(f.suspect!)).toContain("MANY_REJECTED");
    const r = read(true);
    expect(r.suspect?.code).toBe("FIXTURE_CHATTER");
    expect(Math.abs(r.analysis.inductance_h - truth_h)).toBeLessThan(r.analysis.inductance_u_h);
  });

  it("a fixture chattering in 4 of 10 half-cycles: FIXTURE_CHATTER, no number even on request", async () => {
    const { read } = await chattered(0.4);
    // The analysis alone cannot follow the ring (NO_RING); the edges as recorded show the toggles.
    const f = partFault(await caught(async () => read(true)), "FIXTURE_CHATTER", /fixture chatters.*toggles inside/, /check the clips and the fixture's contacts/i);
    expect(f.message).toMatch(/NO_RING/);
    expect(f.suspect).toBeUndefined();
  });

  it("a saturating core: CORE_SATURATING on a fixed strong setting; kept on request, L within U; driven hard, NO_RING", async () => {
    const part = loadScenario("powder-toroid-47u").part;
    const rig = await openRig({ part, seed: 5 });
    // Automatic ranging notices the drift and steps down until the core no longer saturates.
    const auto = await measurePart(rig.client, {});
    expect(codes(auto)).not.toContain("FREQUENCY_DRIFT");
    expect(auto.suspect).toBeUndefined();
    // On a fixed, stronger setting (50 mA through 100 ohm into 100 nF) the drift is measured and refused.
    const estimate = estimateFromReading(rig.client.profile, auto.settings, auto.analysis);
    const f = partFault(await caught(() => measurePart(rig.client, { drive: 1, tank: 2, estimate })),
      "CORE_SATURATING", /changes with the current.*near saturation/, /lower the drive current|Lower the drive current/);
    expect(codes(f.suspect!)).toContain("FREQUENCY_DRIFT");
    const r = await measurePart(rig.client, { drive: 1, tank: 2, estimate, keep_suspect: true });
    expect(r.suspect?.code).toBe("CORE_SATURATING");
    expect(lError(r, part, referenceBoard(), r.capture.tank_c_f)).toBeLessThan(1);
    // Far into saturation (0.5 A through 10 ohm into 1 uF) the ring is no damped sine at all.
    const raw = await rig.client.measure({ drive: 0, tank: 3, charge_us: 1000, edge_limit: 8192, timeout_ms: 1000, quiet_us: 2000 });
    const e = await caught(async () => analyzeCapture(captureFromDevice(raw, rig.client.identity, rig.client.profile, "test")));
    await rig.close();
    expect((e as MeasureError).code).toBe("NO_RING");
  });

  it("a small drift from a class II tank (x7r-tank-mixup, an X7R tank whose capacitance falls with voltage) still reads, with its warning", async () => {
    const t = await openTester({ scenario: "x7r-tank-mixup" }, { reply_timeout_ms: 10_000 });
    const auto = await measurePart(t.client, {});
    const estimate = estimateFromReading(t.client.profile, auto.settings, auto.analysis);
    const r = await measurePart(t.client, { drive: 1, tank: 3, estimate });
    await t.close();
    expect(r.suspect).toBeUndefined();
    expect(codes(r)).toContain("FREQUENCY_DRIFT");
    const part = loadScenario("x7r-tank-mixup").part;
    expect(Math.abs(r.analysis.inductance_h - part.inductance_h)).toBeLessThan(r.analysis.inductance_u_h);
  });
});
