// Command dispatch: one frame in, one OK or ER frame out (preceded by any data frames). Commands
// that take time (MS, ST) finish from the main loop: see finishPending().

import {
  ERR_ABORTED, ERR_ARGUMENT, ERR_BUSY, ERR_CAPTURE_FAULT, ERR_CHARGE_LIMIT, ERR_CRC, ERR_LINE_TOO_LONG,
  ERR_REST, ERR_RINGING, ERR_UNKNOWN_COMMAND, PROTOCOL_VERSION,
} from "../../shared-protocol/src/constants.ts";
import { FrameReader } from "../../shared-protocol/src/frame-reader.ts";
import * as version from "./version.ts"; // before board.ts, so the two strings lead the data segment
import * as board from "./board.ts";
import * as capture from "./capture.ts";
import { counters } from "./counters.ts";
import { halDeviceId, halNow } from "./hal.ts";
import { maxChargeUs, restOwedTicks } from "./interlocks.ts";
import { LINE_DAMAGED, line, out, send, sendError, sendErrorDetail, sendOk } from "./link.ts";
import { sendProfile } from "./profile.ts";
import * as ring from "./ring-watch.ts";
import { cancelSelfTest, selfTestRunning, startSelfTest, stepSelfTest, strayEdges } from "./self-test.ts";
import { streamCapture } from "./stream.ts";

const reader = new FrameReader();
/** False when the port's capture mode is one the firmware cannot use: no pulse is ever fired. */
let captureUsable: bool = false;
let captureBits: i32 = 0;

export function initCommands(usable: bool, bits: i32): void {
  captureUsable = usable;
  captureBits = bits;
}

/** Handles one received line of `len` bytes, or a line nextLine() had to discard. */
export function handleLine(len: i32): void {
  // A line with a lost byte is answered as corrupted in transit, which it was: resend.
  if (len == LINE_DAMAGED) return sendError(ERR_CRC, "?");
  if (len < 0) return sendError(ERR_LINE_TOO_LONG, "?");
  if (!reader.parse(line, len)) return sendError(reader.error, "?");
  if (reader.fieldIs(0, "ID")) identify();
  else if (reader.fieldIs(0, "PF")) profile();
  else if (reader.fieldIs(0, "MS")) measure();
  else if (reader.fieldIs(0, "AB")) abort();
  else if (reader.fieldIs(0, "CR")) resend();
  else if (reader.fieldIs(0, "ST")) selfTest();
  else if (reader.fieldIs(0, "CN")) reportCounters();
  else if (reader.fieldIs(0, "TK")) reportTicks();
  else sendError(ERR_UNKNOWN_COMMAND, "?");
}

export function busy(): bool {
  return capture.phase != capture.PHASE_IDLE || selfTestRunning();
}

/**
 * The free-running timer's low 32 bits, read as the command is handled: over a minute or more the
 * host compares them with its own clock to measure the crystal's error. Sent as a signed 32-bit
 * decimal (the host reads it back as unsigned).
 */
function reportTicks(): void {
  if (reader.count != 1) return sendError(ERR_ARGUMENT, "TK");
  out.begin("TK");
  out.putInt(halNow());
  send();
  sendOk("TK");
}

function identify(): void {
  if (reader.count != 1) return sendError(ERR_ARGUMENT, "ID");
  out.begin("ID");
  out.putText(version.PRODUCT);
  out.putText(version.FIRMWARE_VERSION);
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
  sendProfile(captureBits);
  sendOk("PF");
}

/** Milliseconds, rounded up, for a refusal's detail. */
function ticksToMsCeil(ticks: i32): i32 {
  return (ticks + board.TICKS_PER_MS - 1) / board.TICKS_PER_MS;
}

function measure(): void {
  if (busy()) return sendError(ERR_BUSY, "MS");
  // Seven fields, or eight with the host's request token, echoed in OK MS and the capture
  // header so that a reply can never be taken for another request's.
  if (reader.count != 7 && reader.count != 8) return sendError(ERR_ARGUMENT, "MS");
  const drive: i32 = reader.fieldInt(1, 0, board.DRIVE_COUNT - 1);
  const tank: i32 = reader.fieldInt(2, 0, board.TANK_COUNT - 1);
  const chargeUs: i32 = reader.fieldInt(3, 1, 10000000);
  const edgeLimit: i32 = reader.fieldInt(4, 1, board.BUFFER_EDGES);
  const timeoutMs: i32 = reader.fieldInt(5, 1, board.MAX_TIMEOUT_MS);
  // At least 10 µs of quiet: the capture is polled every eighth of it.
  const quietUs: i32 = reader.fieldInt(6, 10, board.MAX_TIMEOUT_MS * 1000);
  const token: i32 = reader.count == 8 ? reader.fieldInt(7, 0, 65535) : NO_TOKEN;
  if (reader.error != 0) return sendError(ERR_ARGUMENT, "MS");
  // Interlocks: the host cannot talk the firmware past these.
  if (chargeUs > maxChargeUs(drive)) return sendError(ERR_CHARGE_LIMIT, "MS");
  const rest: i32 = restOwedTicks(drive, chargeUs);
  if (rest > 0) return sendErrorDetail(ERR_REST, "MS", ticksToMsCeil(rest));
  const ringing: i32 = ring.remaining();
  if (ringing > 0) return sendErrorDetail(ERR_RINGING, "MS", ticksToMsCeil(ringing));
  if (!captureUsable) return sendError(ERR_CAPTURE_FAULT, "MS");
  const s = capture.settings;
  s.drive = drive;
  s.tank = tank;
  s.chargeUs = chargeUs;
  s.edgeLimit = edgeLimit;
  s.timeoutMs = timeoutMs;
  s.quietUs = quietUs;
  streamToken = token;
  sendOkToken("MS", token);
  capture.begin();
}

function abort(): void {
  // Abort is never refused: it is the host's way to make the hardware safe.
  const measuring: bool = capture.phase != capture.PHASE_IDLE && capture.phase != capture.PHASE_DONE &&
    capture.phase != capture.PHASE_FAULT;
  const testing: bool = selfTestRunning();
  capture.stopAll();
  cancelSelfTest();
  if (measuring) sendError(ERR_ABORTED, "MS");
  if (testing) sendError(ERR_ABORTED, "ST");
  sendOk("AB");
}

function resend(): void {
  if (busy()) return sendError(ERR_BUSY, "CR");
  if ((reader.count != 1 && reader.count != 2) || !capture.haveCapture) return sendError(ERR_ARGUMENT, "CR");
  const token: i32 = reader.count == 2 ? reader.fieldInt(1, 0, 65535) : NO_TOKEN;
  if (reader.error != 0) return sendError(ERR_ARGUMENT, "CR");
  sendOkToken("CR", token);
  streamCapture(token);
}

/** The token of the MS that started the capture now running (echoed in its header). */
let streamToken: i32 = -1;
/** A command sent without a token gets replies without one (protocol v1 as first published). */
const NO_TOKEN: i32 = -1;

function sendOkToken(cmd: string, token: i32): void {
  out.begin("OK");
  out.putText(cmd);
  if (token != NO_TOKEN) out.putInt(token);
  send();
}

function selfTest(): void {
  if (busy()) return sendError(ERR_BUSY, "ST");
  if (reader.count != 1) return sendError(ERR_ARGUMENT, "ST");
  startSelfTest(); // the reply follows when the window is over
}

function reportCounters(): void {
  if (reader.count != 1) return sendError(ERR_ARGUMENT, "CN");
  out.begin("CT");
  out.putInt(counters.measurements);
  out.putInt(counters.faults);
  out.putInt(counters.rejected);
  out.putInt(counters.overruns);
  send();
  sendOk("CN");
}

/** Advances and completes long-running commands; returns ticks until the next needed poll. */
export function finishPending(): i32 {
  let wait: i32 = capture.step();
  if (capture.phase == capture.PHASE_DONE) {
    streamCapture(streamToken);
    capture.reported();
  } else if (capture.phase == capture.PHASE_FAULT) {
    sendError(ERR_CAPTURE_FAULT, "MS");
    capture.reported();
  }
  if (selfTestRunning()) {
    wait = stepSelfTest();
    if (!selfTestRunning()) {
      out.begin("SR");
      out.putInt(board.SELF_TEST_US);
      out.putInt(strayEdges());
      send();
      sendOk("ST");
    }
  }
  return wait;
}
