import { describe, expect, it } from "vitest";
import { crossingTimes } from "../sim/comparator-edges.ts";
import { chooseResidualForms, evaluateEdges, evaluateUnindexed, makeEdgeSet, modelEdgeTime, modelEvaluations } from "./edge-model.ts";

// docs/method.md §2 reference ring: f0 = 100 kHz, Q = 50, A0 = 1 V, VH = -VL = 20 mV.
const w0 = 2 * Math.PI * 100e3;
const alpha = w0 / 100;
const wd = Math.sqrt(w0 * w0 - alpha * alpha);
const p = [wd, 0, 0, alpha];

describe("edge model (docs/method.md §2)", () => {
  it("puts the first edges where the notes do", () => {
    // docs/method.md §2 (computed): rising at 31.841, 10 034.407, 20 037.107 ns; falling at
    // 5 033.108, 15 035.739 ns.
    const ns = [0, 1, 2, 3, 4].map((m) => modelEdgeTime(p, m, 0.02, -0.02) * 1e9);
    expect(ns[0]).toBeCloseTo(31.841, 3);
    expect(ns[1]).toBeCloseTo(5033.108, 3);
    expect(ns[2]).toBeCloseTo(10034.407, 3);
    expect(ns[3]).toBeCloseTo(15035.739, 3);
    expect(ns[4]).toBeCloseTo(20037.107, 3);
  });

  it("agrees with the simulator's exact crossings over the whole ring (independent solver)", () => {
    const cr = crossingTimes({ a0_v: 1, alpha_per_s: alpha, wd_rad_s: wd }, 0.035, -0.005, 10000, 1);
    expect(cr.times.length).toBeGreaterThan(100);
    for (let m = 0; m < cr.times.length; m++) {
      const t = modelEdgeTime(p, m, 0.035, -0.005);
      expect(Math.abs(t - cr.times[m])).toBeLessThan(1e-15 + 1e-12 * cr.times[m]);
    }
  });

  it("has zero residual at exact crossings and an analytic Jacobian matching finite differences", () => {
    const cr = crossingTimes({ a0_v: 1, alpha_per_s: alpha, wd_rad_s: wd }, 0.035, -0.005, 200, 1);
    const n = cr.times.length;
    const e = makeEdgeSet(Float64Array.from(cr.times), Uint8Array.from(cr.levels), Float64Array.from(cr.times, (_, m) => m));
    const scale = [wd * 1e-7, 1e-7, 1e-7, alpha * 1e-6];
    for (const phase of [true, false]) {
      chooseResidualForms(p, e, 0.035, -0.005);
      if (!phase) e.form.fill(0);
      if (phase) expect(e.form[0]).toBe(1); // a strong edge is scored in phase
      const r = new Float64Array(n);
      const jac = new Float64Array(4 * n);
      evaluateEdges(p, e, 0.035, -0.005, null, null, { r, jac });
      for (let k = 0; k < n; k++) expect(Math.abs(r[k])).toBeLessThan(1e-9 * (e.form[k] ? e.scale_v[k] : 1));
      for (let i = 0; i < 4; i++) {
        const hi = p.slice();
        const lo = p.slice();
        hi[i] += scale[i];
        lo[i] -= scale[i];
        const rh = new Float64Array(n);
        const rl = new Float64Array(n);
        evaluateEdges(hi, e, 0.035, -0.005, null, null, { r: rh });
        evaluateEdges(lo, e, 0.035, -0.005, null, null, { r: rl });
        for (let k = 0; k < n; k += 7) {
          const fd = (rh[k] - rl[k]) / (2 * scale[i]);
          expect(Math.abs(fd - jac[4 * k + i])).toBeLessThan(1e-5 * Math.abs(jac[4 * k + i]) + 1e-12);
        }
      }
    }
  });

  it("makes straight-line edge timing read the period long (threshold-crossing bias)", () => {
    // docs/method.md §2: edges are late by asin(h/A)/wd, growing as the ring decays.
    const late = [0, 2, 4, 40, 80].map((m) => modelEdgeTime(p, m, 0.02, -0.02) - (m * Math.PI) / wd);
    for (let i = 1; i < late.length; i++) expect(late[i]).toBeGreaterThan(late[i - 1]);
    const a = (t: number) => Math.exp(-alpha * t);
    const mLast = 80;
    expect(late[4]).toBeCloseTo(Math.asin(0.02 / a(modelEdgeTime(p, mLast, 0.02, -0.02))) / wd, 12);
  });

  it("counts one evaluation per edge evaluated (the benchmark's work count) and none for skipped edges", () => {
    const cr = crossingTimes({ a0_v: 1, alpha_per_s: alpha, wd_rad_s: wd }, 0.035, -0.005, 40, 1);
    const n = cr.times.length;
    const m = Float64Array.from(cr.times, (_, k) => (k % 5 === 4 ? NaN : k)); // every fifth edge without an index
    const e = makeEdgeSet(Float64Array.from(cr.times), Uint8Array.from(cr.levels), m);
    chooseResidualForms(p, e, 0.035, -0.005);
    const indexed = m.filter((x) => x === x).length;
    const mask = new Float64Array(n).fill(1);
    mask[0] = 0;
    const slope = new Float64Array(n);
    const before = modelEvaluations();
    evaluateEdges(p, e, 0.035, -0.005, null, null, { r: new Float64Array(n), slope });
    expect(modelEvaluations() - before).toBe(indexed);
    evaluateEdges(p, e, 0.035, -0.005, mask, null, { slope });
    expect(modelEvaluations() - before).toBe(2 * indexed - 1);
    // The unindexed edges' slopes, as evaluateEdges gives an indexed edge's.
    const loose = new Float64Array(n).fill(NaN);
    expect(evaluateUnindexed(p, e, 0.035, -0.005, new Float64Array(n), { slope: loose, curvature: new Float64Array(n) })).toBe(n - indexed);
    expect(modelEvaluations() - before).toBe(2 * indexed - 1 + (n - indexed));
    const all = makeEdgeSet(e.t_s, e.rising, Float64Array.from(cr.times, (_, k) => k));
    all.form.set(e.form);
    all.scale_v.set(e.scale_v);
    const ref = new Float64Array(n);
    evaluateEdges(p, all, 0.035, -0.005, null, null, { slope: ref });
    for (let k = 4; k < n; k += 5) expect(loose[k]).toBe(ref[k]);
  });
});
