// Where a capture stops following its ring (ring-end.ts), on edge lists made by hand.

import { describe, expect, it } from "vitest";
import { Random } from "../sim/random.ts";
import { offsetThresholds, ringExtent, tailEnd, tailSelects } from "./ring-end.ts";

/** Alternating edges of a 10 µs ring, with `extra(k, rng)` extra close pairs after edge k. */
function edges(n: number, extra: (k: number, rng: Random) => boolean, seed = 1): { t: number[]; rising: number[] } {
  const rng = new Random(seed);
  const t: number[] = [];
  const rising: number[] = [];
  for (let k = 0; t.length < n; k++) {
    const tk = k * 5e-6 + 20e-9 * rng.normal();
    t.push(tk);
    rising.push(k % 2 === 0 ? 1 : 0);
    if (extra(k, rng)) {
      // Chatter: the opposite edge and the same one again within 0.4 µs.
      t.push(tk + 0.2e-6, tk + 0.4e-6);
      rising.push(k % 2 === 0 ? 0 : 1, k % 2 === 0 ? 1 : 0);
    }
  }
  return { t: t.slice(0, n), rising: rising.slice(0, n) };
}

describe("ringExtent", () => {
  it("keeps a clean ring whole", () => {
    const e = edges(2000, () => false);
    expect(ringExtent(e.t, e.rising).end).toBe(2000);
  });

  it("ends the ring where chatter sets in and grows", () => {
    // No chatter before edge 1000, then ever more of it (as a decaying ring against the noise).
    const e = edges(3000, (k, rng) => k > 1000 && rng.uniform() < Math.min(1, (k - 1000) / 500));
    const x = ringExtent(e.t, e.rising);
    expect(x.end).toBeGreaterThan(950);
    expect(x.end).toBeLessThan(1100);
    expect(x.rate_after).toBeGreaterThan(0.2);
  });

  it("does not end the ring on glitches that come at one rate all through the capture", () => {
    // 5 % of the edges followed by a glitch pair, from the start to the end (stray pickup).
    for (const seed of [1, 2, 3, 4, 5]) {
      const e = edges(3000, (_k, rng) => rng.uniform() < 0.05, seed);
      expect(ringExtent(e.t, e.rising).end).toBe(3000);
    }
  });
});

describe("tailEnd", () => {
  it("is the first edge after the envelope falls to the threshold plus three noise sd", () => {
    // A0 1 V, alpha 100 /s: exp(-100 t) = 0.035 + 3 * 0.002 at t = 31.94 ms.
    const t = Array.from({ length: 100 }, (_, k) => k * 0.5e-3);
    const k = tailEnd(t, 0, 100, 0.035, 0.002);
    expect(t[k - 1]).toBeLessThan(Math.log(1 / 0.041) / 100);
    expect(t[k]).toBeGreaterThanOrEqual(Math.log(1 / 0.041) / 100);
    expect(tailEnd(t, 0, 100, 0.035, 0)).toBe(100);
  });
});

describe("tailSelects", () => {
  it("holds where the ring dwells near its threshold for many noise correlation times", () => {
    // 2 MHz noise bandwidth: tau = 80 ns. A 16 kHz ring at 35 mV with 1.8 mV of noise dwells within
    // 3 sd of its peak for about 11 us (140 tau); a 500 kHz ring at 20 mV with 0.6 mV for 0.27 us
    // (3.4 tau), where an edge sees about one noise value.
    expect(tailSelects(2 * Math.PI * 16e3, 0.035, 1.8e-3, 2e6)).toBe(true);
    expect(tailSelects(2 * Math.PI * 503e3, 0.02, 0.6e-3, 2e6)).toBe(false);
    expect(tailSelects(2 * Math.PI * 16e3, 0.035, 0, 2e6)).toBe(false);
  });
});

describe("offsetThresholds", () => {
  it("tells the board's offset thresholds from symmetric ones", () => {
    expect(offsetThresholds(0.035, -0.005)).toBe(true);
    expect(offsetThresholds(0.0035, -0.0005)).toBe(true);
    expect(offsetThresholds(0.02, -0.02)).toBe(false);
    expect(offsetThresholds(0.021, -0.019)).toBe(false);
  });
});
