// The edge buffer and the measurement sequence: select, settle, charge, capture until the ring
// is quiet (or the buffer is full, or the window times out), then stream.

import {
  END_FULL, END_NO_EDGES, END_QUIET, END_TIMEOUT,
} from "../../shared-protocol/src/constants.ts";
import * as board from "./board.ts";
import { halCaptureCount, halNow, halPulse, halSelect, halStop } from "./hal.ts";

/** DMA target: (ticks since the switch opened) << 1 | level, one i32 per edge. */
export const edges = new Int32Array(board.BUFFER_EDGES);

export const PHASE_IDLE: i32 = 0;
export const PHASE_SETTLE: i32 = 1;
export const PHASE_CHARGE: i32 = 2;
export const PHASE_CAPTURE: i32 = 3;
export const PHASE_DONE: i32 = 4; // capture finished, waiting to be streamed

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
let restFrom: i32 = 0;
let restTicks: i32 = 0;
let resting: bool = false;

/** True while the duty-cycle interlock still forbids a new pulse. */
export function restPending(): bool {
  if (!resting) return false;
  if (halNow() - restFrom >= restTicks) resting = false;
  return resting;
}

/** Ticks of rest still owed (0 when none), so the main loop can ask to be woken. */
export function restRemaining(): i32 {
  if (!restPending()) return 0;
  return restTicks - (halNow() - restFrom);
}

/** Starts a measurement with validated settings. */
export function begin(): void {
  haveCapture = false;
  edgeCount = 0;
  halSelect(settings.drive, settings.tank);
  phase = PHASE_SETTLE;
  phaseStart = halNow();
}

/** Stops everything at once: switch open, capture off. Safe in any phase. */
export function stopAll(): void {
  halStop();
  if (phase == PHASE_CHARGE || phase == PHASE_CAPTURE) startRest();
  phase = PHASE_IDLE;
}

function startRest(): void {
  const chargeTicks: i32 = settings.chargeUs * board.TICKS_PER_US;
  const minRest: i32 = board.MIN_REST_MS * board.TICKS_PER_MS;
  const dutyRest: i32 = chargeTicks * board.REST_PER_CHARGE;
  restTicks = dutyRest > minRest ? dutyRest : minRest;
  restFrom = halNow();
  resting = true;
}

/** Advances the sequence; returns ticks until it next needs attention (0 when idle). */
export function step(): i32 {
  const now: i32 = halNow();
  const elapsed: i32 = now - phaseStart;
  if (phase == PHASE_SETTLE) {
    const settle: i32 = board.SETTLE_US * board.TICKS_PER_US;
    if (elapsed < settle) return settle - elapsed;
    const chargeTicks: i32 = settings.chargeUs * board.TICKS_PER_US;
    halPulse(chargeTicks, edges.dataStart, settings.edgeLimit);
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

function stepCapture(now: i32): i32 {
  const n: i32 = halCaptureCount();
  if (n != edgeCount) {
    edgeCount = n;
    lastEdgeAt = now;
  }
  const quiet: i32 = settings.quietUs * board.TICKS_PER_US;
  const window: i32 = settings.timeoutMs * board.TICKS_PER_MS;
  const sinceOpen: i32 = now - phaseStart;
  const sinceEdge: i32 = now - lastEdgeAt;
  if (edgeCount >= settings.edgeLimit) return finish(END_FULL);
  if (edgeCount > 0 && sinceEdge >= quiet) return finish(END_QUIET);
  if (sinceOpen >= window) return finish(edgeCount > 0 ? END_TIMEOUT : END_NO_EDGES);
  // Wake at the earlier of the quiet deadline and the window's end; poll at least every 1/8 of
  // the quiet time so that a burst of edges is noticed promptly.
  let wait: i32 = window - sinceOpen;
  if (edgeCount > 0 && quiet - sinceEdge < wait) wait = quiet - sinceEdge;
  const slice: i32 = quiet >> 3;
  if (slice > 0 && slice < wait) wait = slice;
  return wait > 0 ? wait : 1;
}

function finish(reason: i32): i32 {
  halStop();
  edgeCount = halCaptureCount();
  if (edgeCount > settings.edgeLimit) edgeCount = settings.edgeLimit;
  endReason = reason;
  haveCapture = true;
  startRest();
  phase = PHASE_DONE;
  return 1;
}

/** Marks the finished capture as streamed; the sequence is idle again. */
export function streamed(): void {
  phase = PHASE_IDLE;
}
