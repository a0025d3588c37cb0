// Golden vectors (shared-protocol/vectors/*.json) against both builds of the codec.

import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { typescriptBuild, wasmBuild } from "./codec-builds.ts";

const load = (name: string) => JSON.parse(readFileSync(new URL(`../vectors/${name}`, import.meta.url), "utf8"));
const crcVectors = load("crc16.json");
const frameVectors = load("frames.json");
const edgeVectors = load("edges.json");

for (const build of [typescriptBuild(), wasmBuild()]) {
  describe(`protocol vectors, ${build.name} build`, () => {
    it("CRC-16/CCITT-FALSE check value: '123456789' -> 0x29B1 (CRC RevEng catalogue, CRC-16/IBM-3740)", () => {
      expect(build.crc("123456789")).toBe(0x29b1);
    });

    it.each(crcVectors.cases)("CRC of $ascii = $crc ($source)", (c: { ascii: string; crc: string }) => {
      expect(build.crc(c.ascii)).toBe(parseInt(c.crc, 16));
    });

    it.each(frameVectors.write)("writes $line", (c: { tag: string; fields: never[]; line: string }) => {
      expect(build.write(c.tag, c.fields)).toBe(c.line);
    });

    it.each(frameVectors.read)("reads $line", (c: { line: string; fields?: string[]; error?: number }) => {
      const got = build.parse(c.line);
      if (c.fields) expect(got).toEqual(c.fields);
      else expect(got).toBe(c.error);
    });

    it.each(frameVectors.int_fields)("integer field $field in [$min, $max]", (c: { field: string; min: number; max: number; value?: number; error?: number }) => {
      const body = `T ${c.field}`;
      const line = `${body}*${build.crc(body).toString(16).toUpperCase().padStart(4, "0")}`;
      const got = build.fieldInt(line, 1, c.min, c.max);
      if (c.error) expect(got.error).toBe(c.error);
      else expect(got).toEqual({ value: c.value, error: 0 });
    });

    it.each(edgeVectors.encode)("edge codec: $note", (c: { edges: [number, number][]; payload: string; checksum: string }) => {
      expect(build.encode(c.edges)).toEqual({ payload: c.payload, checksum: parseInt(c.checksum, 16) });
      expect(build.decode(c.payload)).toEqual({ edges: c.edges, checksum: parseInt(c.checksum, 16) });
    });

    it.each(edgeVectors.bad_payloads)("refuses payload: $note", (c: { payload: string }) => {
      expect(build.decode(c.payload)).toBeNull();
    });

    it.each(edgeVectors.refused_by_encoder)("encoder refuses: $note", (c: { edges: [number, number][] }) => {
      expect(build.encode(c.edges)).toBeNull();
    });
  });
}
