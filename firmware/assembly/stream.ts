// Streams the finished capture: a header frame, data frames of delta-encoded edges, a trailer
// with the count and a checksum of the decoded edges. Every frame carries a sequence number so
// the host can tell a lost line from a short capture.

import { DATA_PAYLOAD_CHARS, PROTOCOL_VERSION } from "../../shared-protocol/src/constants.ts";
import { EDGE_MAX_CHARS, EdgeEncoder } from "../../shared-protocol/src/edge-codec.ts";
import * as board from "./board.ts";
import { edgeCount, edges, endReason, settings } from "./capture.ts";
import { out, send } from "./link.ts";

const encoder = new EdgeEncoder();
const chunk = new Uint8Array(DATA_PAYLOAD_CHARS);

/** Streams the capture; `token` is the requesting command's token, last in the header (-1: none). */
export function streamCapture(token: i32): void {
  let seq: i32 = 0;
  out.begin("CH");
  out.putInt(seq);
  out.putInt(PROTOCOL_VERSION);
  out.putInt(board.TICK_HZ);
  out.putInt(settings.drive);
  out.putInt(settings.tank);
  out.putInt(settings.chargeUs);
  out.putInt(edgeCount);
  if (token >= 0) out.putInt(token);
  send();
  seq++;

  encoder.reset();
  let used: i32 = 0;
  for (let i: i32 = 0; i < edgeCount; i++) {
    if (used + EDGE_MAX_CHARS > DATA_PAYLOAD_CHARS) {
      sendChunk(seq, used);
      seq++;
      used = 0;
    }
    const word: i32 = edges[i];
    const n: i32 = encoder.encode(word >>> 1, word & 1, chunk, used);
    if (n == 0) break; // out of order: the trailer's count will show the shortfall
    used += n;
  }
  if (used > 0) {
    sendChunk(seq, used);
    seq++;
  }

  out.begin("CE");
  out.putInt(seq);
  out.putInt(encoder.count);
  out.putHex16(encoder.checksum);
  out.putInt(endReason);
  send();
}

function sendChunk(seq: i32, used: i32): void {
  out.begin("CD");
  out.putInt(seq);
  out.putSeparator();
  for (let k: i32 = 0; k < used; k++) out.putByte(chunk[k]);
  send();
}
