// "No new pulse while the previous ring still produces edges." After a capture that ended with
// edges still arriving (edge limit, window timeout, abort, fault) the firmware keeps listening
// with the switch open, and refuses a pulse until no edge has been heard for the quiet time of
// the measurement that started the ring.

import * as board from "./board.ts";
import { halNow } from "./hal.ts";
import { hear, horizon, lastHeardAt, listen, listening, unlisten } from "./listen.ts";

let watching: bool = false;
let quietTicks: i32 = 0;
let quietUsAsked: i32 = 0;

/** Starts watching a ring that may still be going; `quietUs` is how long silence must last. */
export function watch(quietUs: i32): void {
  quietUsAsked = quietUs;
  quietTicks = quietUs * board.TICKS_PER_US;
  listen();
  watching = true;
}

/** Ticks of silence still needed before a pulse is allowed (0: none, the ring is over). */
export function remaining(): i32 {
  if (!watching) return 0;
  hear();
  const silent: i32 = halNow() - lastHeardAt;
  if (silent >= quietTicks) {
    stopWatching();
    return 0;
  }
  return quietTicks - silent;
}

/** When the idle firmware should next look at the watch: by the quiet deadline or the horizon. */
export function nextLook(): i32 {
  const left: i32 = remaining();
  if (left == 0) return 0;
  const h: i32 = horizon();
  return left < h ? left : h;
}

/** Ends the watch (the listener is shared with the self-test and the next capture). */
export function stopWatching(): void {
  if (watching && listening()) unlisten();
  watching = false;
}

export function ringing(): bool {
  return remaining() > 0;
}

/** The quiet time the current watch demands, µs (0 when not watching). */
export function watchedQuietUs(): i32 {
  return watching ? quietUsAsked : 0;
}
