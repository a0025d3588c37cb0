// The host link: a receive ring filled by fw_rx, line extraction for the main loop, and frame
// output through the HAL. All buffers are allocated once, when the module starts.

import { FrameWriter } from "../../shared-protocol/src/frame-writer.ts";
import { ERR_ABORTED, ERR_CAPTURE_FAULT, MAX_LINE_BYTES } from "../../shared-protocol/src/constants.ts";
import { counters } from "./counters.ts";
import { halUartWrite } from "./hal.ts";

const RX_RING_BYTES: i32 = 256;
const rxRing = new Uint8Array(RX_RING_BYTES);
let rxHead: i32 = 0; // next write
let rxTail: i32 = 0; // next read
let rxDropped: bool = false;

export const out = new FrameWriter();
export const line = new Uint8Array(MAX_LINE_BYTES + 1);
let lineLen: i32 = 0;
let lineTooLong: bool = false;

/**
 * Stores one received byte. Returns false when the ring is full: the port must then hold the
 * byte (USB CDC flow control: NAK the host) and offer it again after the next fw_poll.
 */
export function rxByte(b: i32): bool {
  const next: i32 = (rxHead + 1) % RX_RING_BYTES;
  if (next == rxTail) return false;
  rxRing[rxHead] = <u8>b;
  rxHead = next;
  return true;
}

/**
 * For ports without flow control (a bare UART): records that a byte was lost, so the line it
 * belonged to is refused instead of being read wrongly.
 */
export function rxOverrun(): void {
  rxDropped = true;
  counters.overruns++;
}

/** nextLine() results for a line that could not be kept. */
export const LINE_TOO_LONG: i32 = -1;
export const LINE_DAMAGED: i32 = -2; // a byte of it was lost (fw_rx_overrun)

/**
 * Moves received bytes into `line` until a newline. Returns the line's length, 0 when no complete
 * line has arrived yet, LINE_TOO_LONG or LINE_DAMAGED.
 */
export function nextLine(): i32 {
  while (rxTail != rxHead) {
    const c: i32 = rxRing[rxTail];
    rxTail = (rxTail + 1) % RX_RING_BYTES;
    if (c == 0x0a) {
      const n: i32 = lineLen;
      const tooLong: bool = lineTooLong;
      const dropped: bool = rxDropped;
      lineLen = 0;
      lineTooLong = false;
      rxDropped = false;
      if (dropped) return LINE_DAMAGED;
      if (tooLong) return LINE_TOO_LONG;
      if (n == 0) continue; // blank line: ignored, so a host can resynchronise by sending "\n"
      return n;
    }
    if (lineLen >= MAX_LINE_BYTES) {
      lineTooLong = true;
    } else {
      line[lineLen] = <u8>c;
      lineLen++;
    }
  }
  return 0;
}

/** Sends the frame being built in `out`. */
export function send(): void {
  const n: i32 = out.finish();
  if (n > 0) halUartWrite(out.buf.dataStart, n);
}

export function sendOk(cmd: string): void {
  out.begin("OK");
  out.putText(cmd);
  send();
}

/** Abort notices and capture faults report events, not refusals of the host's command. */
function countRefusal(code: i32): void {
  if (code != ERR_ABORTED && code != ERR_CAPTURE_FAULT) counters.rejected++;
}

export function sendError(code: i32, cmd: string): void {
  countRefusal(code);
  out.begin("ER");
  out.putInt(code);
  out.putText(cmd);
  send();
}

/** An error frame with one numeric detail (for example the rest still owed, in ms). */
export function sendErrorDetail(code: i32, cmd: string, detail: i32): void {
  countRefusal(code);
  out.begin("ER");
  out.putInt(code);
  out.putText(cmd);
  out.putInt(detail);
  send();
}
