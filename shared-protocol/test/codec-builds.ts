// The two builds of the shared codec behind one interface, so every vector runs on both: the
// TypeScript build (the sources as the host uses them) and the wasm build (the same sources
// compiled by asc with the firmware's flags, see harness/harness.ts).

import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import * as ts from "../src/index.ts";

export interface CodecBuild {
  name: string;
  crc(ascii: string): number;
  /** Field strings on success, or the error code. */
  parse(line: string): string[] | number;
  fieldInt(line: string, index: number, min: number, max: number): { value: number; error: number };
  write(tag: string, fields: ({ int: number } | { text: string } | { hex: number })[]): string;
  encode(edges: [number, number][]): { payload: string; checksum: number } | null;
  decode(payload: string): { edges: [number, number][]; checksum: number } | null;
}

const enc = new TextEncoder();
const dec = new TextDecoder();

export function typescriptBuild(): CodecBuild {
  const reader = new ts.FrameReader();
  const writer = new ts.FrameWriter();
  return {
    name: "typescript",
    crc: (s) => {
      const b = enc.encode(s);
      return ts.crc16Range(b, 0, b.length);
    },
    parse: (line) => {
      const b = enc.encode(line);
      if (!reader.parse(b, b.length)) return reader.error;
      return Array.from({ length: reader.count }, (_, i) => line.slice(reader.starts[i], reader.ends[i]));
    },
    fieldInt: (line, index, min, max) => {
      const b = enc.encode(line);
      reader.parse(b, b.length);
      reader.error = 0;
      const value = reader.fieldInt(index, min, max);
      return { value, error: reader.error };
    },
    write: (tag, fields) => {
      writer.begin(tag);
      for (const f of fields) {
        if ("int" in f) writer.putInt(f.int);
        else if ("text" in f) writer.putText(f.text);
        else writer.putHex16(f.hex);
      }
      return dec.decode(writer.buf.subarray(0, writer.finish()));
    },
    encode: (edges) => {
      const e = new ts.EdgeEncoder();
      const out = new Uint8Array(edges.length * ts.EDGE_MAX_CHARS + 1);
      let n = 0;
      for (const [t, l] of edges) {
        const k = e.encode(t, l, out, n);
        if (k === 0) return null;
        n += k;
      }
      return { payload: dec.decode(out.subarray(0, n)), checksum: e.checksum };
    },
    decode: (payload) => {
      const d = new ts.EdgeDecoder();
      const ticks = new Int32Array(1024);
      const levels = new Uint8Array(1024);
      const b = enc.encode(payload);
      const n = d.decode(b, 0, b.length, ticks, levels);
      if (n < 0) return null;
      return { edges: Array.from({ length: n }, (_, i) => [ticks[i], levels[i]] as [number, number]), checksum: d.checksum };
    },
  };
}

interface HarnessExports {
  memory: WebAssembly.Memory;
  inputPtr(): number;
  outputPtr(): number;
  crc(len: number): number;
  parse(len: number): number;
  fieldStart(i: number): number;
  fieldEnd(i: number): number;
  fieldInt(i: number, min: number, max: number): number;
  readerError(): number;
  writeBegin(len: number): void;
  writeInt(v: number): void;
  writeText(len: number): void;
  writeHex(v: number): void;
  writeFinish(): number;
  encodeReset(): void;
  encodeEdge(tick: number, level: number): number;
  encodedLength(): number;
  encodeChecksum(): number;
  decodeReset(): void;
  decode(len: number): number;
  decodedTick(i: number): number;
  decodedLevel(i: number): number;
  decodeChecksum(): number;
}

export const HARNESS_PATH = fileURLToPath(new URL("../build/harness.wasm", import.meta.url));

export function wasmBuild(): CodecBuild {
  const mod = new WebAssembly.Module(readFileSync(HARNESS_PATH));
  const x = new WebAssembly.Instance(mod, {}).exports as unknown as HarnessExports;
  const put = (s: string): number => {
    const b = enc.encode(s);
    new Uint8Array(x.memory.buffer, x.inputPtr(), b.length).set(b);
    return b.length;
  };
  return {
    name: "wasm",
    crc: (s) => x.crc(put(s)),
    parse: (line) => {
      const n = x.parse(put(line));
      if (n < 0) return -n;
      return Array.from({ length: n }, (_, i) => line.slice(x.fieldStart(i), x.fieldEnd(i)));
    },
    fieldInt: (line, index, min, max) => {
      x.parse(put(line));
      const value = x.fieldInt(index, min, max);
      return { value, error: x.readerError() };
    },
    write: (tag, fields) => {
      x.writeBegin(put(tag));
      for (const f of fields) {
        if ("int" in f) x.writeInt(f.int);
        else if ("text" in f) x.writeText(put(f.text));
        else x.writeHex(f.hex);
      }
      const n = x.writeFinish();
      return dec.decode(new Uint8Array(x.memory.buffer, x.outputPtr(), n));
    },
    encode: (edges) => {
      x.encodeReset();
      for (const [t, l] of edges) if (x.encodeEdge(t, l) === 0) return null;
      const n = x.encodedLength();
      return { payload: dec.decode(new Uint8Array(x.memory.buffer, x.outputPtr(), n)), checksum: x.encodeChecksum() };
    },
    decode: (payload) => {
      x.decodeReset();
      const n = x.decode(put(payload));
      if (n < 0) return null;
      return { edges: Array.from({ length: n }, (_, i) => [x.decodedTick(i), x.decodedLevel(i)] as [number, number]), checksum: x.decodeChecksum() };
    },
  };
}
