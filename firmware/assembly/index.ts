// Firmware entry points called by a port (see hal.ts for the other direction).

import { busy, finishPending, handleLine, initCommands } from "./commands.ts";
import * as capture from "./capture.ts";
import { halCaptureBits } from "./hal.ts";
import { nextLine, rxByte, rxOverrun } from "./link.ts";

/** Called once after reset, before any other export. Forces the hardware safe. */
export function fw_init(): void {
  capture.stopAll();
  initCommands(capture.init(), halCaptureBits());
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
 * Called from the port's main loop: handles received lines, advances a measurement or a
 * self-test, sends what they produced. Returns the ticks that may pass before the next call
 * (0: nothing to do until input).
 */
export function fw_poll(): i32 {
  for (;;) {
    const len: i32 = nextLine();
    if (len == 0) break;
    handleLine(len);
  }
  const wait: i32 = finishPending();
  if (busy()) return wait > 0 ? wait : 1;
  return capture.idleWait();
}

/**
 * 1 while a measurement or self-test is in progress (settling, charging, capturing, listening
 * or streaming), else 0. Lets a port decide whether to stay awake; the simulated tester uses it
 * to tell a command's waits (which it fast-forwards) from idle rest (which takes real time).
 */
export function fw_busy(): i32 {
  return busy() ? 1 : 0;
}

// The end of everything the module allocated while it started (this file's top level runs after
// every module it imports, so all buffers exist by now): one empty block marks it.
const memoryEnd: usize = heap.alloc(0) + 12;

/**
 * Bytes of linear memory the firmware uses: its data and every buffer, all allocated while the
 * module started (it allocates nothing later). A C port backs linear memory with at least this
 * much and checks it once at start (docs/porting.md, "The C build").
 */
export function fw_memory_used(): i32 {
  return <i32>memoryEnd;
}
