// A tray of parts for sorting on the simulated tester: the simulated bench puts the next part
// on the clips once the session has seen the previous one come off, and takes a part off once it
// has been recorded, so insertion and removal are detected from the ring exactly as on a real
// bench. Values are either the user's or drawn around the nominal (seeded, deterministic).

import type { PartModel } from "../sim/scenario.ts";
import { Random } from "../sim/random.ts";
import type { Limits } from "../values/tolerance.ts";

/**
 * A small air-core-like part of inductance `l_h`: series loss scaled to give a Q of a few tens
 * over the tester's range, a few picofarads of self-capacitance (invented demo values).
 */
export function trayPart(l_h: number): PartModel {
  return { inductance_h: l_h, series_ohm: Math.max(0.01, l_h * 8000), self_capacitance_f: 4e-12 };
}

/**
 * `count` values: most spread normally around the middle of the limits (sd a third of the
 * half-width), every fourth placed near a limit and every seventh clearly outside, so a demo
 * session shows all three decisions.
 */
export function drawTray(limits: Limits, count: number, seed: number): number[] {
  const rng = new Random(seed);
  const mid = (limits.upper + limits.lower) / 2;
  const half = (limits.upper - limits.lower) / 2;
  const out: number[] = [];
  for (let i = 1; i <= count; i++) {
    let v: number;
    if (i % 7 === 0) v = mid + (rng.uniform() < 0.5 ? -1 : 1) * half * (1.6 + 0.5 * rng.uniform());
    else if (i % 4 === 0) v = mid + (rng.uniform() < 0.5 ? -1 : 1) * half * (0.97 + 0.06 * rng.uniform());
    else v = mid + (half / 3) * rng.normal();
    out.push(Number(v.toPrecision(5)));
  }
  return out;
}

/** The simulated bench hand: call `next()` when the clips went open, `take()` after a record. */
export class SimTray {
  private index = 0;
  constructor(private readonly sim: { part: PartModel | null }, private readonly values_h: readonly number[]) {
    sim.part = null;
  }

  get remaining(): number {
    return this.values_h.length - this.index;
  }

  /** Puts the next part on the clips; false when the tray is empty. */
  next(): boolean {
    if (this.index >= this.values_h.length) return false;
    this.sim.part = trayPart(this.values_h[this.index++]);
    return true;
  }

  take(): void {
    this.sim.part = null;
  }
}
