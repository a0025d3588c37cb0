// Self-test: with the switch open and no pulse, the capture path must stay silent. Edges heard
// over the board's self-test window are stray (interference, a comparator oscillating at its
// threshold, a ring that will not die) and are reported. The self-test borrows the listener from
// a ring watch; its silent window counts toward the watch's quiet time, never against it.

import * as board from "./board.ts";
import { counters } from "./counters.ts";
import { halNow } from "./hal.ts";
import { edgesHeard, hear, listen, unlisten } from "./listen.ts";
import * as ring from "./ring-watch.ts";

let running: bool = false;
let startedAt: i32 = 0;
let stray: i32 = 0;
let resumeQuietUs: i32 = 0; // quiet time of a ring watch the self-test interrupted

export function selfTestRunning(): bool {
  return running;
}

export function startSelfTest(): void {
  resumeQuietUs = ring.watchedQuietUs();
  ring.stopWatching();
  listen();
  startedAt = halNow();
  running = true;
}

/** Advances the self-test; returns ticks until it next needs attention, or 0 once it is over. */
export function stepSelfTest(): i32 {
  if (!running) return 0;
  hear();
  const window: i32 = board.SELF_TEST_US * board.TICKS_PER_US;
  const elapsed: i32 = halNow() - startedAt;
  if (elapsed < window) {
    // Re-check often enough that a full listen buffer is re-armed before it loses much.
    const left: i32 = window - elapsed;
    const slice: i32 = window >> 4;
    return left < slice ? left : slice;
  }
  unlisten();
  running = false;
  stray = edgesHeard;
  if (stray > 0) {
    counters.faults++;
    // Whatever is producing edges must not be pulsed into: hand over to the ring watch.
    ring.watch(resumeQuietUs > board.SELF_TEST_US ? resumeQuietUs : board.SELF_TEST_US);
  } else if (resumeQuietUs > board.SELF_TEST_US) {
    ring.watch(resumeQuietUs - board.SELF_TEST_US); // the rest of the silence still owed
  }
  return 0;
}

/** Stops a running self-test early (abort). */
export function cancelSelfTest(): void {
  if (!running) return;
  unlisten();
  running = false;
  // An interrupted watch is not over: listen again from now, for its full quiet time.
  if (resumeQuietUs > 0) ring.watch(resumeQuietUs);
}

/** Stray edges heard by the last self-test. */
export function strayEdges(): i32 {
  return stray;
}
