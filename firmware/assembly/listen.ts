// The capture path with the switch open, for two jobs: watching a ring that may outlive its
// capture (no new pulse until it has been quiet for the quiet time), and the self-test (count
// stray edges over a fixed window). It uses its own buffer so that the last capture stays
// available for resending; when that buffer fills, it is re-armed, because only "was there an
// edge, and when" matters here. A full buffer may have hidden edges after it filled, so it
// counts as activity: the safe reading for an interlock. In raw mode overflow markers fill it
// even in silence, so the firmware asks to be polled before that can happen (horizon()).

import { RAW_OPEN_FLAG, RAW_OVERFLOW_FLAG } from "../../shared-protocol/src/constants.ts";
import { halCaptureBits, halCaptureCount, halNow, halPulse, halStop } from "./hal.ts";

/** 2 KiB: half a second of overflow markers from a 16-bit timer at 64 MHz. */
const LISTEN_ENTRIES: i32 = 512;
const listenBuf = new Int32Array(LISTEN_ENTRIES);

let armed: bool = false;
let scanned: i32 = 0;
/** Edges seen since listen() began. */
export let edgesHeard: i32 = 0;
/** halNow() at the poll that first noticed the latest edge (or when listening began). */
export let lastHeardAt: i32 = 0;

function arm(): void {
  // A charge time of 0 arms the capture without closing the switch (hal.ts, pulse).
  halPulse(0, listenBuf.dataStart, LISTEN_ENTRIES);
  scanned = 0;
}

/** Starts listening with the switch open. */
export function listen(): void {
  edgesHeard = 0;
  lastHeardAt = halNow();
  arm();
  armed = true;
}

/** Takes in what the capture wrote since the last call; returns the number of new edges. */
export function hear(): i32 {
  if (!armed) return 0;
  let n: i32 = halCaptureCount();
  if (n > LISTEN_ENTRIES || n < scanned) n = LISTEN_ENTRIES; // a confused port: re-arm below
  let heard: i32 = 0;
  for (let i: i32 = scanned; i < n; i++) {
    // Edge entries carry neither flag in either capture mode; markers and the open entry do.
    if ((listenBuf[i] & (RAW_OVERFLOW_FLAG | RAW_OPEN_FLAG)) == 0) heard++;
  }
  scanned = n;
  edgesHeard += heard;
  if (heard > 0 || n >= LISTEN_ENTRIES) lastHeardAt = halNow();
  if (n >= LISTEN_ENTRIES) {
    halStop();
    arm();
  }
  return heard;
}

/** Stops listening (the switch stays open). */
export function unlisten(): void {
  if (!armed) return;
  halStop();
  armed = false;
}

export function listening(): bool {
  return armed;
}

/**
 * Ticks within which the listener must be polled again so that, in raw mode, overflow markers
 * alone cannot fill its buffer (half of it, for margin). Extended mode: no limit (2^30).
 */
export function horizon(): i32 {
  const bits: i32 = halCaptureBits();
  if (bits == 0 || bits > 20) return 0x40000000;
  return (LISTEN_ENTRIES >> 1) << bits;
}
