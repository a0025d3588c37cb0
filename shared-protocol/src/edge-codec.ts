// Compact text encoding of a capture's edge list (docs/protocol.md, "Edge payload").
//
// Each edge is (tick, level): tick counts timer ticks since the switch opened, level is 1 after
// a rising and 0 after a falling edge. A ring's half-periods repeat almost exactly, so an edge is
// sent as the change of its interval from the interval two edges earlier (same edge type):
//   d[k] = tick[k] - tick[k-1],  e[k] = d[k] - d[k-2]   (tick[-1] = d[-1] = d[-2] = 0)
// e is zigzag-mapped to a non-negative integer and written in 5-bit groups, least significant
// first: '0'..'O' (0x30 + g) ends a value, 'P'..'o' (0x50 + g) means more groups follow.
// Levels normally alternate starting from a rising edge; an edge whose level does not alternate
// is preceded by the marker 'p'. Ticks stay below 2^30 so every step fits an i32.

import { MAX_EDGE_TICK } from "./constants.ts";
import { crc16Update, crc16UpdateI32, CRC16_INIT } from "./crc16.ts";

export const EDGE_FINAL_BASE: i32 = 0x30;
export const EDGE_MORE_BASE: i32 = 0x50;
export const EDGE_LEVEL_MARK: i32 = 0x70;
/** Most characters one edge can take: the level marker plus seven 5-bit groups. */
export const EDGE_MAX_CHARS: i32 = 8;

/** Running checksum over decoded edges: each edge's tick (4 bytes, little-endian) then its level. */
export function edgeChecksumUpdate(crc: i32, tick: i32, level: i32): i32 {
  return crc16Update(crc16UpdateI32(crc, tick), level & 1);
}

export class EdgeEncoder {
  prevTick: i32;
  prevLevel: i32;
  d1: i32; // interval of the previous edge
  d2: i32; // interval of the edge before that
  checksum: i32;
  count: i32;

  constructor() {
    this.prevTick = 0;
    this.prevLevel = 0;
    this.d1 = 0;
    this.d2 = 0;
    this.checksum = CRC16_INIT;
    this.count = 0;
  }

  reset(): void {
    this.prevTick = 0;
    this.prevLevel = 0;
    this.d1 = 0;
    this.d2 = 0;
    this.checksum = CRC16_INIT;
    this.count = 0;
  }

  /**
   * Writes one edge's characters into out[at, ...) and returns how many were written (at most
   * EDGE_MAX_CHARS), or 0 if the edge is out of order or out of range (the caller must stop).
   */
  encode(tick: i32, level: i32, out: Uint8Array, at: i32): i32 {
    if (tick < this.prevTick || tick > MAX_EDGE_TICK) return 0;
    const lvl: i32 = level & 1;
    let n: i32 = 0;
    if (lvl == this.prevLevel) {
      out[at + n] = <u8>EDGE_LEVEL_MARK;
      n++;
    }
    const d: i32 = tick - this.prevTick;
    const e: i32 = d - this.d2;
    let z: i32 = e >= 0 ? e << 1 : ((-e) << 1) - 1;
    while (z >= 32) {
      out[at + n] = <u8>(EDGE_MORE_BASE + (z & 31));
      n++;
      z = z >> 5;
    }
    out[at + n] = <u8>(EDGE_FINAL_BASE + z);
    n++;
    this.d2 = this.d1;
    this.d1 = d;
    this.prevTick = tick;
    this.prevLevel = lvl;
    this.checksum = edgeChecksumUpdate(this.checksum, tick, lvl);
    this.count++;
    return n;
  }
}

export class EdgeDecoder {
  prevTick: i32;
  prevLevel: i32;
  d1: i32;
  d2: i32;
  checksum: i32;
  count: i32;

  constructor() {
    this.prevTick = 0;
    this.prevLevel = 0;
    this.d1 = 0;
    this.d2 = 0;
    this.checksum = CRC16_INIT;
    this.count = 0;
  }

  reset(): void {
    this.prevTick = 0;
    this.prevLevel = 0;
    this.d1 = 0;
    this.d2 = 0;
    this.checksum = CRC16_INIT;
    this.count = 0;
  }

  /**
   * Decodes payload[start, end) and appends edges to ticks/levels from index this.count.
   * Returns the number of edges decoded, or -1 on a malformed payload, a tick out of range or
   * an output array that is full (the decoder state is then undefined: reset before reuse).
   */
  decode(payload: Uint8Array, start: i32, end: i32, ticks: Int32Array, levels: Uint8Array): i32 {
    let i: i32 = start;
    let decoded: i32 = 0;
    while (i < end) {
      let flip: bool = true;
      if (<i32>payload[i] == EDGE_LEVEL_MARK) {
        flip = false;
        i++;
      }
      let z: i32 = 0;
      let shift: i32 = 0;
      let done: bool = false;
      while (i < end && !done) {
        const c: i32 = payload[i];
        i++;
        if (c >= EDGE_FINAL_BASE && c < EDGE_FINAL_BASE + 32) {
          if (shift > 30 || (shift == 30 && c - EDGE_FINAL_BASE > 1)) return -1;
          z = z | ((c - EDGE_FINAL_BASE) << shift);
          done = true;
        } else if (c >= EDGE_MORE_BASE && c < EDGE_MORE_BASE + 32) {
          if (shift >= 30) return -1;
          z = z | ((c - EDGE_MORE_BASE) << shift);
          shift += 5;
        } else {
          return -1;
        }
      }
      if (!done) return -1;
      const e: i32 = (z & 1) == 0 ? z >>> 1 : -((z >>> 1) + 1);
      const d: i32 = e + this.d2;
      if (d < 0 || d > MAX_EDGE_TICK - this.prevTick) return -1;
      const tick: i32 = this.prevTick + d;
      const lvl: i32 = flip ? 1 - this.prevLevel : this.prevLevel;
      if (this.count >= ticks.length || this.count >= levels.length) return -1;
      ticks[this.count] = tick;
      levels[this.count] = <u8>lvl;
      this.count++;
      decoded++;
      this.d2 = this.d1;
      this.d1 = d;
      this.prevTick = tick;
      this.prevLevel = lvl;
      this.checksum = edgeChecksumUpdate(this.checksum, tick, lvl);
    }
    return decoded;
  }
}
