// Test frequency of the user's choice: Q and ESR depend on the frequency, and the frequency a
// part rings at is set by the tank it rings with (f = 1 / 2π√(LC)). Given an asked frequency,
// the allowed settings are ordered by how far their tank's predicted ring is from it on a log
// scale (a factor 2 above counts as far as a factor 2 below), then by the usual advice ranking
// (best expected u(L) first). What was asked, where the part rang and why no nearer tank was
// used are stated with the reading. Pure: no I/O.

import type { DeviceProfile } from "../device/profile.ts";
import { formatSi } from "../format/si.ts";
import type { Advice } from "./advice.ts";

/**
 * The frequencies a test frequency may be asked in, Hz: a ring on the reference tester spans
 * about 160 Hz (1 H on 1 µF) to 1.6 MHz (its 64 MHz timer at 40 ticks per period); the range
 * is rounded out so that any tester's own limits speak through the ranging's refusals.
 */
export const TEST_FREQUENCY_RANGE = { min: 100, max: 2e6, what: "the ring frequencies a tester works at" } as const;

/** Distance of a ring at `f_hz` from the asked frequency: |ln(f / asked)|. */
export function frequencyDistance(f_hz: number, asked_hz: number): number {
  return Math.abs(Math.log(f_hz / asked_hz));
}

/**
 * The advice reordered for an asked frequency: allowed settings first, nearest tank first (the
 * advice's own ranking within a tank), refused ones after in their order.
 */
export function orderForFrequency(advice: readonly Advice[], asked_hz: number): Advice[] {
  const rank = new Map(advice.map((a, i) => [a, i]));
  return [...advice].sort((a, b) => {
    if ((a.refused === "") !== (b.refused === "")) return a.refused === "" ? -1 : 1;
    if (a.refused === "") {
      const d = frequencyDistance(a.f_hz, asked_hz) - frequencyDistance(b.f_hz, asked_hz);
      // Settings on one tank share the predicted frequency: keep the advice's ranking between them.
      if (Math.abs(d) > 1e-9) return d;
    }
    return rank.get(a)! - rank.get(b)!;
  });
}

/** How near the reading came to the asked frequency (result JSON `test_frequency`). */
export interface FrequencyChoice {
  asked_hz: number;
  /** The reading's undamped resonance f0 (advise: the predicted ring). */
  rang_hz: number;
  /** (rang - asked) / asked. */
  deviation_rel: number;
  tank_index: number;
  /** True when no tank of this tester was predicted to ring nearer the asked frequency. */
  nearest: boolean;
  /** Nearer tanks not used, each with the reason (refused for a limit, or no usable ring). */
  nearer_tanks: { tank_index: number; predicted_hz: number; why: string }[];
  /** One sentence for people: "asked 10.0 kHz, rang at 8.78 kHz (-12 %): the nearest of this tester's tanks". */
  note: string;
}

/**
 * States the choice: `advice` is the last ranked advice (every setting predicted), `failed` the
 * tanks tried that gave no usable ring (tank index to the reason), `tank` and `rang_hz` the
 * reading's; `untried` says why an allowed nearer tank was not used (a setting fixed by the caller);
 * `predicted` words it as a prediction (`rang_hz` is then the predicted ring, before any pulse).
 */
export function describeFrequencyChoice(
  profile: DeviceProfile, advice: readonly Advice[], asked_hz: number, tank: number, rang_hz: number,
  how: { failed?: ReadonlyMap<number, string>; untried?: string; predicted?: boolean } = {},
): FrequencyChoice {
  const failed = how.failed ?? new Map<number, string>();
  const untried = how.untried ?? "was not tried";
  const perTank = new Map<number, Advice[]>();
  for (const a of advice) perTank.set(a.tank, [...(perTank.get(a.tank) ?? []), a]);
  const own = perTank.get(tank)?.[0];
  const ownDistance = frequencyDistance(own?.f_hz ?? rang_hz, asked_hz);
  const nearer: FrequencyChoice["nearer_tanks"] = [];
  for (const [t, list] of [...perTank].sort((x, y) => x[0] - y[0])) {
    if (t === tank) continue;
    const f = list[0].f_hz;
    if (!(frequencyDistance(f, asked_hz) < ownDistance - 1e-9)) continue;
    const allowed = list.find((a) => a.refused === "");
    // A refused tank gives the refusal of its gentlest setting (the advice lists those by ring).
    const why = failed.get(t) ?? (allowed ? untried : `refused: ${list[0].refused}`);
    nearer.push({ tank_index: t, predicted_hz: f, why });
  }
  const deviation = (rang_hz - asked_hz) / asked_hz;
  const head = `asked ${formatSi(asked_hz, "Hz", 3)}, ${how.predicted ? "would ring at about" : "rang at"} ${formatSi(rang_hz, "Hz", 3)} (${howFar(rang_hz, asked_hz)})`;
  const tankName = (t: number) => `the ${formatSi(profile.tanks[t].nominal_f, "F", 3)} tank`;
  // Beyond every tank's ring for this part: the nearest tank is the end of what this tester reaches.
  const predicted = [...perTank.values()].map((l) => l[0].f_hz);
  const beyond = asked_hz > Math.max(...predicted) ? ", the highest this part rings at on them" : asked_hz < Math.min(...predicted) ? ", the lowest this part rings at on them" : "";
  const note = nearer.length === 0
    ? `${head}: the nearest of this tester's tanks${beyond}`
    : `${head} on ${tankName(tank)}: ${nearer.map((n) => `${tankName(n.tank_index)} would ring nearer (about ${formatSi(n.predicted_hz, "Hz", 3)}) but ${n.why}`).join("; ")}`;
  return { asked_hz, rang_hz, deviation_rel: deviation, tank_index: tank, nearest: nearer.length === 0, nearer_tanks: nearer, note };
}

/** "-12 %" within a factor 1.5; "3.7 times lower" / "18 times higher" beyond. */
function howFar(rang_hz: number, asked_hz: number): string {
  const ratio = rang_hz / asked_hz;
  if (ratio >= 1 / 1.5 && ratio <= 1.5) {
    const d = 100 * (ratio - 1);
    return `${d >= 0 ? "+" : "-"}${Math.abs(d).toFixed(Math.abs(d) < 10 ? 1 : 0)} %`;
  }
  return ratio > 1 ? `${ratio.toPrecision(2)} times higher` : `${(1 / ratio).toPrecision(2)} times lower`;
}
