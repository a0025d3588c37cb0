// Test harness: the shared codec compiled by asc exactly as the firmware uses it (stub runtime,
// no asserts), with flat exports so the golden vectors can be run against the wasm build.
// Not part of the firmware image.

import { crc16Range } from "../src/crc16.ts";
import { FrameReader } from "../src/frame-reader.ts";
import { FrameWriter } from "../src/frame-writer.ts";
import { EdgeDecoder, EdgeEncoder } from "../src/edge-codec.ts";

const input = new Uint8Array(4096);
const output = new Uint8Array(4096);
const reader = new FrameReader();
const writer = new FrameWriter();
const encoder = new EdgeEncoder();
const decoder = new EdgeDecoder();
const ticks = new Int32Array(1024);
const levels = new Uint8Array(1024);
let outLen: i32 = 0;

export function inputPtr(): usize {
  return input.dataStart;
}
export function outputPtr(): usize {
  return output.dataStart;
}

export function crc(len: i32): i32 {
  return crc16Range(input, 0, len);
}

// Reader: returns the field count, or -(error code).
export function parse(len: i32): i32 {
  return reader.parse(input, len) ? reader.count : -reader.error;
}
export function fieldStart(i: i32): i32 {
  return reader.starts[i];
}
export function fieldEnd(i: i32): i32 {
  return reader.ends[i];
}
export function fieldInt(i: i32, min: i32, max: i32): i32 {
  reader.error = 0;
  return reader.fieldInt(i, min, max);
}
export function readerError(): i32 {
  return reader.error;
}

// Writer: text arguments are taken from input[0, len).
function inputString(len: i32): string {
  return String.UTF8.decodeUnsafe(input.dataStart, len);
}
export function writeBegin(tagLen: i32): void {
  writer.begin(inputString(tagLen));
}
export function writeInt(v: i32): void {
  writer.putInt(v);
}
export function writeText(len: i32): void {
  writer.putText(inputString(len));
}
export function writeHex(v: i32): void {
  writer.putHex16(v);
}
export function writeFinish(): i32 {
  const n = writer.finish();
  for (let i: i32 = 0; i < n; i++) output[i] = writer.buf[i];
  return n;
}

// Edge codec.
export function encodeReset(): void {
  encoder.reset();
  outLen = 0;
}
export function encodeEdge(tick: i32, level: i32): i32 {
  const n = encoder.encode(tick, level, output, outLen);
  outLen += n;
  return n;
}
export function encodedLength(): i32 {
  return outLen;
}
export function encodeChecksum(): i32 {
  return encoder.checksum;
}
export function decodeReset(): void {
  decoder.reset();
}
export function decode(len: i32): i32 {
  return decoder.decode(input, 0, len, ticks, levels);
}
export function decodedTick(i: i32): i32 {
  return ticks[i];
}
export function decodedLevel(i: i32): i32 {
  return levels[i];
}
export function decodeChecksum(): i32 {
  return decoder.checksum;
}
