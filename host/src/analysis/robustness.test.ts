import { describe, expect, it } from "vitest";
import { ringOfQ } from "../physics/ring.ts";
import { captureEdges, crossingTimes } from "../sim/comparator-edges.ts";
import { Random } from "../sim/random.ts";
import { analyzeRing, type RingInput } from "./index.ts";
import { fitRing } from "./analyze-ring.ts";
import { FitWorkspace, fitEdgeModel } from "./edge-fit.ts";
import { chooseResidualForms, P_ALPHA } from "./edge-model.ts";

interface Edges {
  ticks: number[];
  levels: number[];
}

/** A demo choke: 220 µH, Q 60 on 22 nF (about 72 kHz), rung to 1 V, offset thresholds. */
function choke(seed: number, tick_hz = 64e6, maxEdges = 3000, l_h = 220e-6, c_f = 22e-9, q = 60) {
  const rung = ringOfQ(l_h, c_f, q, 1);
  const ring = rung.ring;
  const comp = { rising_v: 0.035, falling_v: -0.005, jitter_s: 3e-9, noise_v: 0.3e-3, delay_rise_s: 40e-9, delay_fall_s: 40e-9 };
  const edges = captureEdges(ring, comp, { tick_hz, ppm: 0, dead_time_s: 0 }, new Random(seed), maxEdges, 10);
  return { edges, l_h, q: rung.q, c_f, tick_hz, period_ticks: (tick_hz * 2 * Math.PI) / ring.wd_rad_s };
}

function input(e: Edges, tick_hz: number, c_f: number): RingInput {
  return { tick_hz, ticks: e.ticks, levels: e.levels, tank_c_f: c_f, thresholds_v: [0.035, -0.005], tank_c_u_f: 0, timebase_u_rel: 0 };
}

/** Chatter: after a fraction of the edges, an opposite and a same edge a few ticks later. */
function addGlitchPairs(e: Edges, fraction: number, rng: Random, spread = 3): { edges: Edges; added: number } {
  const out: Edges = { ticks: [], levels: [] };
  let added = 0;
  for (let i = 0; i < e.ticks.length; i++) {
    out.ticks.push(e.ticks[i]);
    out.levels.push(e.levels[i]);
    const next = i + 1 < e.ticks.length ? e.ticks[i + 1] : Infinity;
    if (rng.uniform() < fraction) {
      const a = e.ticks[i] + 1 + Math.floor(spread * rng.uniform());
      const b = a + 1 + Math.floor(spread * rng.uniform());
      if (b < next) {
        out.ticks.push(a, b);
        out.levels.push(1 - e.levels[i], e.levels[i]);
        added += 2;
      }
    }
  }
  return { edges: out, added };
}

/** Lost edges (two of one level in a row); the first three are kept. */
function dropEdges(e: Edges, fraction: number, rng: Random): Edges & { dropped: number } {
  const out = { ticks: [] as number[], levels: [] as number[], dropped: 0 };
  for (let i = 0; i < e.ticks.length; i++) {
    if (i > 2 && rng.uniform() < fraction) {
      out.dropped++;
      continue;
    }
    out.ticks.push(e.ticks[i]);
    out.levels.push(e.levels[i]);
  }
  return out;
}

describe("cycle bookkeeping and outliers", () => {
  it("survives 5 % glitch pairs and 2 % dropped edges, and says what it rejected", () => {
    for (const seed of [1, 2, 3]) {
      const c = choke(seed);
      const clean = analyzeRing(input(c.edges, c.tick_hz, c.c_f));
      const rng = new Random(100 + seed);
      const dropped = dropEdges(c.edges, 0.02, rng);
      const { edges, added } = addGlitchPairs(dropped, 0.05, rng);
      const a = analyzeRing(input(edges, c.tick_hz, c.c_f));
      // Common bench practice, no source: the damaged capture reads like the clean one.
      expect(Math.abs(a.inductance_h / clean.inductance_h - 1)).toBeLessThan(0.5 * clean.inductance_u_h / clean.inductance_h);
      expect(Math.abs(a.q / clean.q - 1)).toBeLessThan(0.5 * clean.q_u / clean.q);
      expect(a.edges_rejected).toBeGreaterThanOrEqual(added);
      expect(a.edges_rejected).toBeLessThanOrEqual(added + 3);
      expect(a.rejected.length).toBe(a.edges_rejected);
      expect(a.rejected.every((r) => r.reason.length > 10)).toBe(true);
      if (dropped.dropped >= 2) expect(a.warnings.map((w) => w.code)).toContain("MISSING_EDGES");
    }
  });

  it("rejects a spurious edge pair from the switch transient", () => {
    const c = choke(4);
    const clean = analyzeRing(input(c.edges, c.tick_hz, c.c_f));
    const e = { ticks: [0, 2, ...c.edges.ticks], levels: [1, 0, ...c.edges.levels] };
    const a = analyzeRing(input(e, c.tick_hz, c.c_f));
    expect(a.rejected.map((r) => r.index)).toEqual(expect.arrayContaining([0, 1]));
    expect(Math.abs(a.inductance_h / clean.inductance_h - 1)).toBeLessThan(1e-6);
    // A lone falling edge before the ring (the comparator starts low) is rejected too.
    const lone = analyzeRing(input({ ticks: [1, ...c.edges.ticks], levels: [0, ...c.edges.levels] }, c.tick_hz, c.c_f));
    expect(lone.rejected.map((r) => r.index)).toContain(0);
    expect(Math.abs(lone.inductance_h / clean.inductance_h - 1)).toBeLessThan(1e-6);
  });

  it("flags a clipped first cycle and is not pulled by it", () => {
    const c = choke(5);
    const clean = analyzeRing(input(c.edges, c.tick_hz, c.c_f));
    // A front end recovering from clipping delays the first cycle's edges (here by 4 % of a period).
    const late = Math.round(0.04 * c.period_ticks);
    const ticks = c.edges.ticks.slice();
    ticks[0] += late;
    ticks[1] += late;
    const a = analyzeRing(input({ ticks, levels: c.edges.levels }, c.tick_hz, c.c_f));
    expect(a.warnings.map((w) => w.code)).toContain("SUSPECTED_CLIPPING");
    expect(a.rejected.map((r) => r.index)).toEqual(expect.arrayContaining([0, 1]));
    // Two edges fewer than the clean capture: the same result within a small part of its U.
    expect(Math.abs(a.inductance_h - clean.inductance_h)).toBeLessThan(0.25 * clean.inductance_u_h);
    expect(Math.abs(a.q - clean.q)).toBeLessThan(0.25 * clean.q_u);
  });

  it("keeps count over thousands of edges at 12 ticks per period", () => {
    // 4.7 µH on 470 pF rings at 3.4 MHz: 12 ticks of 40 MHz per period, Q 1000 -> ~2100 edges.
    const l_h = 4.7e-6, c_f = 470e-12, q = 1000;
    for (const seed of [6, 7]) {
      const c = choke(seed, 40e6, 5000, l_h, c_f, q);
      expect(c.period_ticks).toBeGreaterThan(10);
      expect(c.period_ticks).toBeLessThan(20);
      expect(c.edges.ticks.length).toBeGreaterThan(2000);
      const rng = new Random(200 + seed);
      const { edges, added } = addGlitchPairs(dropEdges(c.edges, 0.02, rng), 0.05, rng, 1);
      const a = analyzeRing(input(edges, c.tick_hz, c.c_f));
      expect(Math.abs(a.inductance_h / l_h - 1)).toBeLessThan(5e-4);
      // Q 1000 at 12 ticks per period: the Cramér-Rao bound for Q on this capture is 3 %.
      expect(Math.abs(a.q / c.q - 1)).toBeLessThan(0.12);
      expect(a.edges_rejected).toBeGreaterThanOrEqual(added);
      expect(a.edges_rejected).toBeLessThan(added + 0.01 * edges.ticks.length);
    }
  });
});

describe("the multimodal (A0, alpha) likelihood (docs/method.md §2)", () => {
  it("has a false basin that a local fit falls into, and the analysis does not", () => {
    // The notes' reference ring (f0 = 100 kHz, Q = 50, ±20 mV), cut where A = 2h: with symmetric
    // thresholds and no ring end, the amplitude shows only in the curvature of the edge delays.
    const w0 = 2 * Math.PI * 100e3;
    const alpha = w0 / 100;
    const wd = Math.sqrt(w0 * w0 - alpha * alpha);
    const cr = crossingTimes({ a0_v: 1, alpha_per_s: alpha, wd_rad_s: wd }, 0.02, -0.02, 10000, 1);
    const keep = cr.times.map((_, i) => i).filter((i) => Math.exp(-alpha * cr.times[i]) >= 0.04);
    const tick_hz = 1e15;
    const inp: RingInput = {
      tick_hz, ticks: keep.map((i) => Math.round(cr.times[i] * tick_hz)), levels: keep.map((i) => cr.levels[i]),
      tank_c_f: 1e-9, thresholds_v: [0.02, -0.02],
    };
    const a = analyzeRing(inp);
    expect(Math.abs(a.alpha_per_s / alpha - 1)).toBeLessThan(1e-6);

    // A plain local fit from a start on the (A0, alpha) valley at a quarter of the true decay
    // (D = alpha t_last = 1, E = ln(A(t_last)/h) = 0.1) stops in another minimum.
    const s = fitRing(inp);
    const n = s.edges.n;
    const tLast = s.edges.t_s[n - 1];
    const w = new Float64Array(n).fill(1e18); // equal weights, 1 nV scale
    const ws = new FitWorkspace(n);
    const settle = (p0: ArrayLike<number>) => {
      let f = { p: Float64Array.from(p0), chi2: 0, converged: false };
      for (let round = 0; round < 3; round++) {
        chooseResidualForms(f.p, s.edges, 0.02, -0.02);
        f = fitEdgeModel(s.edges, f.p, w, ws, { vh_v: 0.02, vl_v: -0.02, timingVar_s2: null, limits: null, maxIterations: 300 });
      }
      return f;
    };
    const start = [s.p[0], s.p[1], Math.log(0.02) + 0.1 + 1, 1 / tLast];
    const local = settle(start);
    const global = settle(s.p);
    expect(local.converged).toBe(true);
    expect(local.chi2).toBeGreaterThan(1e6 * Math.max(global.chi2, 1e-3));
    expect(Math.abs(local.p[P_ALPHA] / alpha - 1)).toBeGreaterThan(0.3);
    expect(Math.abs(global.p[P_ALPHA] / alpha - 1)).toBeLessThan(1e-6);
  });

  it("takes the true basin at every cut-off of the notes' reference ring", () => {
    // Noiseless edges have one exact solution (docs/method.md §2), so a period off by more
    // than 1 ppm means a false basin. Each capture is the reference ring cut after 20, 21, ...
    // edges, with symmetric (±20 mV) and offset (+35/-5 mV) thresholds.
    const w0 = 2 * Math.PI * 100e3;
    const alpha = w0 / 100;
    const wd = Math.sqrt(w0 * w0 - alpha * alpha);
    const tick_hz = 1e15;
    for (const th of [[0.02, -0.02], [0.035, -0.005]] as [number, number][]) {
      const cr = crossingTimes({ a0_v: 1, alpha_per_s: alpha, wd_rad_s: wd }, th[0], th[1], 10000, 1);
      for (let n = 20; n <= cr.times.length; n++) {
        const a = analyzeRing({
          tick_hz, ticks: cr.times.slice(0, n).map((t) => Math.round(t * tick_hz)), levels: cr.levels.slice(0, n),
          tank_c_f: 1e-9, thresholds_v: th,
        });
        expect(Math.abs(a.fd_hz / (wd / (2 * Math.PI)) - 1)).toBeLessThan(1e-6);
      }
    }
  });
});


describe("the end of the ring", () => {
  /** A slow high-Q winding (100 mH on 1 nF, Q 250), its whole ring captured (it ends on quiet). */
  function winding(seed: number, th: [number, number], maxEdges = 5000) {
    const l_h = 100e-3, c_f = 1e-9, tick_hz = 64e6;
    const { ring } = ringOfQ(l_h, c_f, 250, 1);
    const comp = { rising_v: th[0], falling_v: th[1], jitter_s: 0.5 / tick_hz, noise_v: 0.3e-3, delay_rise_s: 40e-9, delay_fall_s: 40e-9 };
    const edges = captureEdges(ring, comp, { tick_hz, ppm: 0, dead_time_s: 0 }, new Random(seed), maxEdges, 10);
    const inp = (e: Edges): RingInput => ({
      tick_hz, ticks: e.ticks, levels: e.levels, tank_c_f: c_f, thresholds_v: th, tank_c_u_f: 0, timebase_u_rel: 0,
      ring_ended: e.ticks.length < maxEdges,
    });
    return { edges, inp, l_h };
  }

  it("lets a ring that ended lose its last edge without pulling L", () => {
    // "Ended on quiet" says no edge followed the last one; if the last edge itself was lost,
    // that must not contradict the crossing that did happen. Offset thresholds: before the
    // looser limit the rms L error with the last edge removed was several times the clean one.
    let clean = 0, lost = 0;
    const seeds = 40;
    for (let seed = 1; seed <= seeds; seed++) {
      const w = winding(seed, [0.035, -0.005]);
      const full = analyzeRing(w.inp(w.edges));
      const cut = analyzeRing(w.inp({ ticks: w.edges.ticks.slice(0, -1), levels: w.edges.levels.slice(0, -1) }));
      clean += (full.inductance_h / w.l_h - 1) ** 2;
      lost += (cut.inductance_h / w.l_h - 1) ** 2;
    }
    // One lost edge of ~140 may cost a little, not the 36x it cost before (bench practice, no source).
    expect(Math.sqrt(lost / clean)).toBeLessThan(1.3);
  });

  it("follows a fit whose last edges slip past the grazing limit to the true minimum", () => {
    // Symmetric thresholds: amplitude and decay show only where the ring grazes the thresholds.
    // When the model moved a phase-form edge's envelope under its threshold, the fit used to
    // stop on a clamped residual 5-56 bound sd from the truth (6 of 200 bench seeds); every
    // seed here must now land within 3 of its own expanded uncertainties of the true L.
    for (let seed = 1; seed <= 200; seed++) {
      const w = winding(seed, [0.02, -0.02]);
      const a = analyzeRing(w.inp(w.edges));
      expect(Math.abs(a.inductance_h - w.l_h)).toBeLessThan(3 * a.inductance_u_h);
    }
  });

  it("fits the runner-up start in full when the short fits cannot tell two basins apart", () => {
    // The same ring cut by a 500-edge buffer (of about 620): the amplitude shows only in the
    // delays of the last edges. The short fits on a subset once picked a ring of 45 mV with a
    // third of the decay in many seeds (L off by ~110 bound sd); fitted in full, the true basin
    // has the higher likelihood.
    for (let seed = 1; seed <= 30; seed++) {
      const w = winding(seed, [0.02, -0.02], 500);
      expect(w.edges.ticks.length).toBe(500);
      const a = analyzeRing(w.inp(w.edges));
      expect(Math.abs(a.inductance_h - w.l_h)).toBeLessThan(3 * a.inductance_u_h);
    }
  });

  it("widens the uncertainty to both rings when the edges fit two decays almost equally well", () => {
    // A short symmetric ring (150 µH on 47 nF, Q 5, 12 edges, 1 V at ±20 mV): two basins of
    // nearly equal likelihood are common, and the wrong one was reported 8-21 U from the truth.
    // Flagged captures must lie within twice their widened U (a k = 2 interval misses by a
    // little now and then), and the warning must name both Q values.
    const l_h = 150e-6, c_f = 47e-9, tick_hz = 64e6, th: [number, number] = [0.02, -0.02];
    const { ring } = ringOfQ(l_h, c_f, 5, 1);
    const comp = { rising_v: th[0], falling_v: th[1], jitter_s: 0.5 / tick_hz, noise_v: 0.3e-3, delay_rise_s: 40e-9, delay_fall_s: 40e-9 };
    let flagged = 0;
    for (let seed = 1; seed <= 100; seed++) {
      const e = captureEdges(ring, comp, { tick_hz, ppm: 0, dead_time_s: 0 }, new Random(seed), 5000, 10);
      const a = analyzeRing({ tick_hz, ticks: e.ticks, levels: e.levels, tank_c_f: c_f, thresholds_v: th, tank_c_u_f: 0, timebase_u_rel: 0, ring_ended: true });
      const w = a.warnings.find((x) => x.code === "AMBIGUOUS_DECAY");
      if (!w) continue;
      flagged++;
      expect(w.message).toMatch(/Q [0-9.]+ or [0-9.]+/);
      // Twice U: a k = 2 interval misses now and then (bench practice, no source).
      expect(Math.abs(a.inductance_h - l_h)).toBeLessThan(2 * a.inductance_u_h);
      // Q_UNCERTAIN judges the widened U that is reported, not the single fit's.
      expect(a.warnings.some((x) => x.code === "Q_UNCERTAIN")).toBe(a.q_u > 0.2 * a.q);
    }
    expect(flagged).toBeGreaterThan(0);
  });
});
