// Firmware entry points called by a port (see hal.ts for the other direction).

import { handleLine, streamIfDone } from "./commands.ts";
import * as capture from "./capture.ts";
import { nextLine, rxByte } from "./link.ts";

/** Called once after reset, before any other export. Forces the hardware safe. */
export function fw_init(): void {
  capture.stopAll();
}

/** Called for every byte received from the host, in order. Only queues the byte. */
export function fw_rx(byte: i32): void {
  rxByte(byte);
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
