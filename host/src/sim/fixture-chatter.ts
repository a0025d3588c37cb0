// An intermittent clip contact, as the simulator's fixture may have one: during the ring the
// contact between a clip and the part's lead now and then opens for a moment (the loop is broken:
// the inductor's current stops, its energy goes into the gap, the tank keeps its voltage, and the
// ring starts again from that voltage when the contact closes) or turns resistive for a moment (a
// burst of contact resistance in series with the part: the ring decays faster meanwhile). Events
// arrive at random (a Poisson process, drawn from the pulse's own noise stream, so a seed replays
// them); the ring is integrated through them with the nonlinear front end (nonlinear-ring.ts),
// whose series resistance gets the contact's. An open contact is a gap resistance high enough
// that the current stops within a small share of a period.

import type { Random } from "./random.ts";

/** The contact's misbehaviour, per scenario (`fixture.chatter`). */
export interface ContactChatter {
  /** Mean number of contact events per second of ring. */
  events_per_s: number;
  /** Share of events that open the contact; the rest are resistance bursts. Default 0.5. */
  open_share?: number;
  /** Shortest and longest open interval, seconds. Default 20 µs to 300 µs. */
  open_s?: [number, number];
  /** Smallest and largest resistance of a burst, ohms. Default 2 Ω to 50 Ω. */
  burst_ohm?: [number, number];
  /** Shortest and longest burst, seconds. Default 20 µs to 300 µs. */
  burst_s?: [number, number];
}

/** One event: extra series resistance `ohm` (Infinity: open) from `t0_s` to `t1_s`. */
export interface ContactEvent {
  t0_s: number;
  t1_s: number;
  ohm: number;
}

/** Draws the events of one ring up to `window_s`; at most `max_events`. */
export function contactEvents(ch: ContactChatter, window_s: number, rng: Random, max_events = 100_000): ContactEvent[] {
  const events: ContactEvent[] = [];
  if (!(ch.events_per_s > 0)) return events;
  const [o0, o1] = ch.open_s ?? [20e-6, 300e-6];
  const [r0, r1] = ch.burst_ohm ?? [2, 50];
  const [b0, b1] = ch.burst_s ?? [20e-6, 300e-6];
  const openShare = ch.open_share ?? 0.5;
  let t = 0;
  while (events.length < max_events) {
    t += -Math.log(1 - rng.uniform()) / ch.events_per_s;
    if (t >= window_s) break;
    const open = rng.uniform() < openShare;
    const d = open ? o0 + (o1 - o0) * rng.uniform() : b0 + (b1 - b0) * rng.uniform();
    events.push({ t0_s: t, t1_s: t + d, ohm: open ? Infinity : r0 + (r1 - r0) * rng.uniform() });
    t += d; // the next event starts after this one ends
  }
  return events;
}

/**
 * The contact's series resistance at time t, as a function for the integrator. An open contact
 * is `open_ohm` (sized by the caller from the ring: the current must die well within a period).
 */
export function contactResistance(events: readonly ContactEvent[], open_ohm: number): (t: number) => number {
  return (t: number) => {
    let lo = 0;
    let hi = events.length;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (events[mid].t1_s <= t) lo = mid + 1;
      else hi = mid;
    }
    const e = events[lo];
    if (!e || t < e.t0_s) return 0;
    return e.ohm === Infinity ? open_ohm : e.ohm;
  };
}

/** Longest event, seconds: the ring may fall silent this long and still come back. */
export function longestEvent(events: readonly ContactEvent[]): number {
  return events.reduce((m, e) => Math.max(m, e.t1_s - e.t0_s), 0);
}
