// The edge buffer and the measurement sequence: select, settle, charge, capture until the ring
// is quiet (or the buffer is full, or the window times out), then stream. Every way out of a
// running measurement opens the switch; a ring that may outlive its capture is watched.

import {
  END_FULL, END_NO_EDGES, END_QUIET, END_TIMEOUT,
} from "../../shared-protocol/src/constants.ts";
import * as board from "./board.ts";
import { counters } from "./counters.ts";
import { halCaptureBits, halCaptureCount, halNow, halPulse, halSelect, halStop } from "./hal.ts";
import { bookPulse } from "./interlocks.ts";
import * as ring from "./ring-watch.ts";
import * as ext from "./timer-extend.ts";

/** DMA target, then (converted in place) the edges: ticks since the switch opened << 1 | level. */
export const edges = new Int32Array(board.BUFFER_EDGES);

export const PHASE_IDLE: i32 = 0;
export const PHASE_SETTLE: i32 = 1;
export const PHASE_CHARGE: i32 = 2;
export const PHASE_CAPTURE: i32 = 3;
export const PHASE_DONE: i32 = 4; // capture finished, waiting to be streamed
export const PHASE_FAULT: i32 = 5; // capture path misbehaved, switch forced open; report it

export class Settings {
  drive: i32 = 0;
  tank: i32 = 0;
  chargeUs: i32 = 0;
  edgeLimit: i32 = 0;
  timeoutMs: i32 = 0;
  quietUs: i32 = 0;
}

export const settings = new Settings();
export let phase: i32 = PHASE_IDLE;
export let edgeCount: i32 = 0;
export let endReason: i32 = END_QUIET;
/** True once a capture has completed and its edges are still in the buffer (for resend). */
export let haveCapture: bool = false;

let phaseStart: i32 = 0; // halNow() when the current phase began
let lastEdgeAt: i32 = 0;
let captureBits: i32 = 0;
let written: i32 = 0; // entries the capture hardware has written

/** Reads the port's capture mode once; false when the firmware cannot work with it. */
export function init(): bool {
  captureBits = halCaptureBits();
  return ext.bitsSupported(captureBits);
}

/** Starts a measurement with validated settings. */
export function begin(): void {
  haveCapture = false;
  edgeCount = 0;
  ring.stopWatching();
  halSelect(settings.drive, settings.tank);
  phase = PHASE_SETTLE;
  phaseStart = halNow();
}

/** Stops everything at once: switch open, capture off. Safe in any phase. */
export function stopAll(): void {
  halStop();
  if (phase == PHASE_CHARGE || phase == PHASE_CAPTURE) afterPulse(true);
  phase = PHASE_IDLE;
}

/** What every pulse leaves behind: heat in its resistor and, if the ring may go on, a watch. */
function afterPulse(ringMayContinue: bool): void {
  bookPulse(settings.drive, settings.chargeUs);
  if (ringMayContinue) ring.watch(settings.quietUs);
}

/** Advances the sequence; returns ticks until it next needs attention (0 when idle). */
export function step(): i32 {
  const now: i32 = halNow();
  const elapsed: i32 = now - phaseStart;
  if (phase == PHASE_SETTLE) {
    const settle: i32 = board.SETTLE_US * board.TICKS_PER_US;
    if (elapsed < settle) return settle - elapsed;
    const chargeTicks: i32 = settings.chargeUs * board.TICKS_PER_US;
    ext.reset(captureBits);
    written = 0;
    // Extended mode: one entry per edge, so the limit is the capacity. Raw mode: markers share
    // the buffer, so offer all of it and stop at the limit in software.
    halPulse(chargeTicks, edges.dataStart, captureBits == 0 ? settings.edgeLimit : board.BUFFER_EDGES);
    counters.measurements++;
    phase = PHASE_CHARGE;
    phaseStart = now;
    return chargeTicks;
  }
  if (phase == PHASE_CHARGE) {
    const chargeTicks: i32 = settings.chargeUs * board.TICKS_PER_US;
    if (elapsed < chargeTicks) return chargeTicks - elapsed;
    phase = PHASE_CAPTURE;
    phaseStart = phaseStart + chargeTicks; // the switch opened here, by timer compare
    lastEdgeAt = phaseStart;
    edgeCount = 0;
    return 1;
  }
  if (phase == PHASE_CAPTURE) return stepCapture(now);
  return 0;
}

/** Takes in new entries; false when the capture path has shown a fault. */
function absorb(): bool {
  const n: i32 = halCaptureCount();
  const capacity: i32 = captureBits == 0 ? settings.edgeLimit : board.BUFFER_EDGES;
  // A count that shrinks or passes the capacity means the port's capture is confused (stuck).
  if (n < written || n > capacity) return false;
  written = n;
  ext.absorb(edges, n, settings.edgeLimit);
  return !ext.fault;
}

function stepCapture(now: i32): i32 {
  if (!absorb()) return fail();
  if (ext.edgeTotal != edgeCount) {
    edgeCount = ext.edgeTotal;
    lastEdgeAt = now;
  }
  const quiet: i32 = settings.quietUs * board.TICKS_PER_US;
  const window: i32 = settings.timeoutMs * board.TICKS_PER_MS;
  const sinceOpen: i32 = now - phaseStart;
  const sinceEdge: i32 = now - lastEdgeAt;
  const capacity: i32 = captureBits == 0 ? settings.edgeLimit : board.BUFFER_EDGES;
  if (edgeCount >= settings.edgeLimit || written >= capacity) return finish(END_FULL);
  if (edgeCount > 0 && sinceEdge >= quiet) return finish(END_QUIET);
  if (sinceOpen >= window) return finish(edgeCount > 0 ? END_TIMEOUT : END_NO_EDGES);
  // Wake at the earlier of the quiet deadline and the window's end; poll at least every 1/8 of
  // the quiet time so that a burst of edges is noticed promptly.
  let wait: i32 = window - sinceOpen;
  if (edgeCount > 0 && quiet - sinceEdge < wait) wait = quiet - sinceEdge;
  // An eighth of the quiet time, but never more often than every 10 µs.
  let slice: i32 = quiet >> 3;
  if (slice < 10 * board.TICKS_PER_US) slice = 10 * board.TICKS_PER_US;
  if (slice < wait) wait = slice;
  return wait > 0 ? wait : 1;
}

function finish(reason: i32): i32 {
  halStop();
  if (!absorb()) return fail();
  edgeCount = ext.edgeTotal;
  endReason = reason;
  haveCapture = true;
  // Stopped while edges were still arriving: the ring may outlive the capture.
  afterPulse(reason == END_FULL || reason == END_TIMEOUT);
  phase = PHASE_DONE;
  return 1;
}

function fail(): i32 {
  halStop();
  counters.faults++;
  haveCapture = false;
  afterPulse(true);
  phase = PHASE_FAULT;
  return 1;
}

/** Marks the finished (or failed) capture as reported; the sequence is idle again. */
export function reported(): void {
  phase = PHASE_IDLE;
}

/** Ticks until the idle firmware next has something to do (0: nothing until input). */
export function idleWait(): i32 {
  // The rest needs no wake-up: the thermal budget is judged when the next pulse is asked for.
  return ring.nextLook();
}
