// Firmware entry points called by a port (see hal.ts for the other direction).

import { handleLine, streamIfDone } from "./commands.ts";
import * as capture from "./capture.ts";
import { nextLine, rxByte, rxOverrun } from "./link.ts";

/** Called once after reset, before any other export. Forces the hardware safe. */
export function fw_init(): void {
  capture.stopAll();
}

/**
 * Called for every byte received from the host, in order. Only queues the byte. Returns 0 when
 * the receive queue is full: hold the byte, call fw_poll, and offer it again.
 */
export function fw_rx(byte: i32): i32 {
  return rxByte(byte) ? 1 : 0;
}

/** Called by a port that had to drop a received byte (UART overrun); spoils the current line. */
export function fw_rx_overrun(): void {
  rxOverrun();
}

/**
 * Called from the port's main loop: handles received lines, advances a measurement, streams a
 * finished capture. Returns the ticks that may pass before the next call (0: wait for input).
 */
export function fw_poll(): i32 {
  for (;;) {
    const len: i32 = nextLine();
    if (len == 0) break;
    handleLine(len);
  }
  const wait: i32 = capture.step();
  streamIfDone();
  if (capture.phase != capture.PHASE_IDLE) return wait > 0 ? wait : 1;
  return capture.restRemaining();
}

/**
 * 1 while a measurement is in progress (settling, charging, capturing or streaming), else 0.
 * Lets a port decide whether to stay awake; the simulated tester uses it to tell a
 * measurement's waits (which it fast-forwards) from idle rest (which takes real time).
 */
export function fw_busy(): i32 {
  return capture.phase != capture.PHASE_IDLE ? 1 : 0;
}
