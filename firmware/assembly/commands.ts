// Command dispatch: one frame in, one OK or ER frame out (preceded by any data frames).

import {
  ERR_ABORTED, ERR_ARGUMENT, ERR_BUSY, ERR_CHARGE_LIMIT, ERR_LINE_TOO_LONG, ERR_REST, ERR_UNKNOWN_COMMAND,
  PROTOCOL_VERSION,
} from "../../shared-protocol/src/constants.ts";
import { FrameReader } from "../../shared-protocol/src/frame-reader.ts";
import * as board from "./board.ts";
import * as capture from "./capture.ts";
import { halDeviceId } from "./hal.ts";
import { line, out, send, sendError, sendErrorDetail, sendOk } from "./link.ts";
import { streamCapture } from "./stream.ts";

const reader = new FrameReader();

/** Handles one received line of `len` bytes (-1: the line overflowed and was discarded). */
export function handleLine(len: i32): void {
  if (len < 0) {
    sendError(ERR_LINE_TOO_LONG, "?");
    return;
  }
  if (!reader.parse(line, len)) {
    sendError(reader.error, "?");
    return;
  }
  if (reader.fieldIs(0, "ID")) identify();
  else if (reader.fieldIs(0, "PF")) profile();
  else if (reader.fieldIs(0, "MS")) measure();
  else if (reader.fieldIs(0, "AB")) abort();
  else if (reader.fieldIs(0, "CR")) resend();
  else sendError(ERR_UNKNOWN_COMMAND, "?");
}

function busy(): bool {
  return capture.phase != capture.PHASE_IDLE;
}

function identify(): void {
  if (reader.count != 1) return sendError(ERR_ARGUMENT, "ID");
  out.begin("ID");
  out.putText(board.PRODUCT);
  out.putText(board.FIRMWARE_VERSION);
  out.putInt(PROTOCOL_VERSION);
  const id: i32 = halDeviceId();
  out.putSeparator();
  out.putChars("HT-");
  out.putHexRaw((id >>> 16) & 0xffff);
  out.putHexRaw(id & 0xffff);
  send();
  sendOk("ID");
}

function profile(): void {
  if (reader.count != 1) return sendError(ERR_ARGUMENT, "PF");
  out.begin("PT");
  out.putInt(board.TICK_HZ);
  send();
  for (let i: i32 = 0; i < board.DRIVE_COUNT; i++) {
    out.begin("PR");
    out.putInt(i);
    out.putInt(board.DRIVE_MILLIOHM[i]);
    out.putInt(board.DRIVE_POWER_MW[i]);
    out.putInt(board.DRIVE_MAX_CHARGE_US[i]);
    send();
  }
  for (let i: i32 = 0; i < board.TANK_COUNT; i++) {
    out.begin("PC");
    out.putInt(i);
    out.putInt(board.TANK_PF[i]);
    send();
  }
  out.begin("PH");
  out.putInt(board.THRESHOLD_RISING_UV);
  out.putInt(board.THRESHOLD_FALLING_UV);
  send();
  out.begin("PS");
  out.putInt(board.SUPPLY_MV);
  out.putInt(board.CLAMP_MV);
  send();
  out.begin("PL");
  out.putInt(board.BUFFER_EDGES);
  out.putInt(board.MIN_REST_MS);
  out.putInt(board.REST_PER_CHARGE);
  out.putInt(board.MAX_TIMEOUT_MS);
  out.putInt(board.SETTLE_US);
  send();
  sendOk("PF");
}

function measure(): void {
  if (busy()) return sendError(ERR_BUSY, "MS");
  if (reader.count != 7) return sendError(ERR_ARGUMENT, "MS");
  const drive: i32 = reader.fieldInt(1, 0, board.DRIVE_COUNT - 1);
  const tank: i32 = reader.fieldInt(2, 0, board.TANK_COUNT - 1);
  const chargeUs: i32 = reader.fieldInt(3, 1, 10000000);
  const edgeLimit: i32 = reader.fieldInt(4, 1, board.BUFFER_EDGES);
  const timeoutMs: i32 = reader.fieldInt(5, 1, board.MAX_TIMEOUT_MS);
  const quietUs: i32 = reader.fieldInt(6, 1, board.MAX_TIMEOUT_MS * 1000);
  if (reader.error != 0) return sendError(ERR_ARGUMENT, "MS");
  // Interlocks: the host cannot talk the firmware past these.
  if (chargeUs > board.DRIVE_MAX_CHARGE_US[drive]) return sendError(ERR_CHARGE_LIMIT, "MS");
  if (capture.restPending()) {
    // The remaining rest in milliseconds (rounded up) tells the host how long to wait.
    const ms: i32 = (capture.restRemaining() + board.TICKS_PER_MS - 1) / board.TICKS_PER_MS;
    return sendErrorDetail(ERR_REST, "MS", ms);
  }
  const s = capture.settings;
  s.drive = drive;
  s.tank = tank;
  s.chargeUs = chargeUs;
  s.edgeLimit = edgeLimit;
  s.timeoutMs = timeoutMs;
  s.quietUs = quietUs;
  sendOk("MS");
  capture.begin();
}

function abort(): void {
  // Abort is never refused: it is the host's way to make the hardware safe.
  const wasRunning: bool = busy() && capture.phase != capture.PHASE_DONE;
  capture.stopAll();
  if (wasRunning) sendError(ERR_ABORTED, "MS");
  sendOk("AB");
}

function resend(): void {
  if (busy()) return sendError(ERR_BUSY, "CR");
  if (!capture.haveCapture) return sendError(ERR_ARGUMENT, "CR");
  sendOk("CR");
  streamCapture();
}

/** Sends a finished capture; called from the main loop. */
export function streamIfDone(): void {
  if (capture.phase != capture.PHASE_DONE) return;
  streamCapture();
  capture.streamed();
}
