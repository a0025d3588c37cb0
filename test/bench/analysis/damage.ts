// Damaged captures for the outlier figure: the same noisy captures as the efficiency run, then
// 2 % of the edges lost (two edges of one level in a row, as a comparator or capture unit that
// misses an edge produces) and, after 5 % of the surviving edges, a glitch pair (chatter: an
// opposite and a same edge a few ticks after the real one). The ratio of the rms L errors,
// damaged over clean, on the same seeds, measures what the damage costs beyond the 2 % of
// information lost (which alone raises the rms by about 1 %).

import { analyzeRing } from "../../../host/src/analysis/index.ts";
import { Random } from "../../../host/src/sim/random.ts";
import { failureCode, type PointResult } from "./efficiency.ts";
import { captureOf, inputOf } from "./grid.ts";
import { rms } from "./stats.ts";

export const DROP_FRACTION = 0.02;
export const GLITCH_FRACTION = 0.05;

export interface DamageResult {
  name: string;
  ratio: number;
  /** The same over the seeds whose damage kept the ring's last edge, and how many lost it: a
   *  capture that ends on quiet tells the fit the ring ended after its last edge, which a lost
   *  last edge contradicts. */
  ratio_last_kept: number;
  last_lost: number;
  /** Edges added as glitches and edges dropped, summed over the seeds. */
  added: number;
  dropped: number;
  /** Edges the analysis rejected, summed over the seeds. */
  rejected: number;
  failures: Record<string, number>;
}

export function damage(ticks: number[], levels: number[], rng: Random, periodTicks: number) {
  const t: number[] = [];
  const l: number[] = [];
  let dropped = 0;
  let added = 0;
  let lastLost = false;
  // Chatter lasts a few ticks, but never most of a half-period (at 12 ticks per period: 1 tick).
  const spread = Math.max(1, Math.min(3, Math.floor(periodTicks / 8)));
  for (let i = 0; i < ticks.length; i++) {
    // The first three edges are kept: a capture that starts with a lost edge is a different test.
    if (i > 2 && rng.uniform() < DROP_FRACTION) {
      dropped++;
      if (i === ticks.length - 1) lastLost = true;
      continue;
    }
    t.push(ticks[i]);
    l.push(levels[i]);
    if (rng.uniform() < GLITCH_FRACTION) {
      const next = i + 1 < ticks.length ? ticks[i + 1] : Infinity;
      const a = ticks[i] + 1 + Math.floor(spread * rng.uniform());
      const b = a + 1 + Math.floor(spread * rng.uniform());
      if (b < next) {
        t.push(a, b);
        l.push(1 - levels[i], levels[i]);
        added += 2;
      }
    }
  }
  return { ticks: t, levels: l, dropped, added, lastLost };
}

/** The damaged counterpart of one efficiency-run point (its seeds, its clean errors). */
export function runDamaged(r: PointResult): DamageResult {
  const pp = r.pp;
  const periodTicks = (pp.g.tick_hz * 2 * Math.PI) / pp.ring.wd_rad_s;
  const err: number[] = [];
  const clean: number[] = [];
  const errKept: number[] = [];
  const cleanKept: number[] = [];
  let lastLost = 0;
  const failures: Record<string, number> = {};
  let added = 0, dropped = 0, rejected = 0;
  r.seeds.forEach((seed, i) => {
    const c = captureOf(pp, seed);
    const d = damage(Array.from(c.ticks), Array.from(c.levels), new Random(1_000_003 + seed), periodTicks);
    added += d.added;
    dropped += d.dropped;
    if (d.lastLost) lastLost++;
    try {
      const a = analyzeRing(inputOf(pp, d.ticks, d.levels));
      rejected += a.edges_rejected;
      if (!Number.isFinite(r.l_err[i])) return; // compared on seeds where both analyses ran
      err.push(a.inductance_h / pp.g.l_h - 1);
      clean.push(r.l_err[i]);
      if (!d.lastLost) {
        errKept.push(err[err.length - 1]);
        cleanKept.push(r.l_err[i]);
      }
    } catch (e) {
      const code = failureCode(e);
      failures[code] = (failures[code] ?? 0) + 1;
    }
  });
  return {
    name: pp.g.name, ratio: rms(err) / rms(clean), ratio_last_kept: rms(errKept) / rms(cleanKept), last_lost: lastLost,
    added, dropped, rejected, failures,
  };
}
