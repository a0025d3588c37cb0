// Host-side wrapper of the shared codec: builds command lines and splits received lines into
// tag + fields. The CRC and syntax checks are the shared FrameReader's, the same code the
// firmware runs.

import { FrameReader, FrameWriter } from "@henrytick/shared-protocol";
import { CodedError } from "../coded-error.ts";

const encoder = new TextEncoder();
const writer = new FrameWriter();
const reader = new FrameReader();

/** A frame accepted by the CRC and syntax checks. */
export interface Frame {
  tag: string;
  fields: string[];
  line: string;
}

/** Encodes a command frame with integer arguments, newline included. */
export function encodeCommand(tag: string, args: readonly number[] = []): Uint8Array {
  writer.begin(tag);
  for (const a of args) {
    if (!Number.isInteger(a) || a < -2147483647 || a > 2147483647) {
      throw new TypeError(`command ${tag}: argument ${a} is not a 32-bit integer`);
    }
    writer.putInt(a);
  }
  const n = writer.finish();
  if (n === 0) throw new RangeError(`command ${tag}: frame longer than the protocol allows`);
  return writer.buf.slice(0, n);
}

/** Result of decoding a line: a frame, or the protocol error code explaining the refusal. */
export type Decoded = { ok: true; frame: Frame } | { ok: false; code: number; line: string };

export function decodeLine(line: string): Decoded {
  const bytes = encoder.encode(line);
  if (!reader.parse(bytes, bytes.length)) return { ok: false, code: reader.error, line };
  const fields: string[] = [];
  const text = line.endsWith("\r") ? line.slice(0, -1) : line;
  for (let i = 0; i < reader.count; i++) fields.push(text.slice(reader.starts[i], reader.ends[i]));
  return { ok: true, frame: { tag: fields[0], fields: fields.slice(1), line: text } };
}

/** Parses a decimal integer field strictly. */
export function intField(frame: Frame, index: number, name: string): number {
  const s = frame.fields[index];
  if (s === undefined || !/^-?\d{1,10}$/.test(s)) {
    throw new ProtocolError("BAD_FIELD", `frame ${frame.tag}: field ${name} (${index + 1}) is not an integer: ${JSON.stringify(s)}`);
  }
  return Number(s);
}

/** A link-level failure: corrupt frame, missing line, unexpected reply. */
export class ProtocolError extends CodedError {}
