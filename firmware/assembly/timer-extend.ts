// Turns what the capture hardware wrote into the edge buffer into edges (ticks since the switch
// opened << 1 | level), in place, as the entries arrive.
//
// Extended mode (capture_bits 0): the port already delivers ticks since the switch opened; the
// entries are only checked (in order, no flag bits).
//
// Raw mode (capture_bits N, 8..24): the port's N-bit timer free-runs. The first entry holds the
// counter value at which the switch opened (RAW_OPEN_FLAG | raw); overflow markers
// (RAW_OVERFLOW_FLAG | count) are written when the overflow interrupt runs; captures are
// raw << 2 | pending << 1 | level. The race: a capture latched just after the counter wrapped,
// but before the overflow interrupt ran, is recorded before its marker. The port flags such a
// capture as pending (the overflow flag was set when it recorded it), and the firmware settles
// it by its value: a pending capture in the lower half of the range happened after the wrap, one
// in the upper half before it. That holds while the overflow interrupt's latency stays below
// half the timer period (docs/porting.md).
//
// Edges are written at or before the entry they come from (each edge has its own entry, and the
// open entry comes first), so converting in place never overwrites an unread entry.

import { MAX_EDGE_TICK, RAW_OPEN_FLAG, RAW_OVERFLOW_FLAG } from "../../shared-protocol/src/constants.ts";

const FLAGS: i32 = RAW_OVERFLOW_FLAG | RAW_OPEN_FLAG;

let bits: i32 = 0;
let readAt: i32 = 0; // entries consumed
let epoch: i32 = 0; // overflows seen since the switch opened
let openRaw: i32 = -1; // counter value when the switch opened, -1 until its entry arrives
let lastTick: i32 = 0;
/** Edges converted so far; they occupy the start of the buffer. */
export let edgeTotal: i32 = 0;
/** Set when the entries cannot be a real capture (a port fault); conversion then stops. */
export let fault: bool = false;

/** True for a capture-timer width the firmware can extend: 0 (extended mode) or 8..24 bits. */
export function bitsSupported(captureBits: i32): bool {
  return captureBits == 0 || (captureBits >= 8 && captureBits <= 24);
}

export function reset(captureBits: i32): void {
  bits = captureBits;
  readAt = 0;
  epoch = 0;
  openRaw = -1;
  lastTick = 0;
  edgeTotal = 0;
  fault = false;
}

/** Converts entries [readAt, written) while fewer than `limit` edges exist. */
export function absorb(buf: Int32Array, written: i32, limit: i32): void {
  while (readAt < written && edgeTotal < limit && !fault) {
    const w: i32 = buf[readAt];
    readAt++;
    if (bits == 0) {
      accept(buf, w >>> 1, w & 1, (w & FLAGS) != 0);
    } else {
      absorbRaw(buf, w);
    }
  }
}

function absorbRaw(buf: Int32Array, w: i32): void {
  const period: i32 = 1 << bits;
  const mask: i32 = period - 1;
  if ((w & RAW_OVERFLOW_FLAG) != 0) {
    const count: i32 = w & 0x3fffffff;
    if (openRaw < 0 || count == 0) fault = true;
    epoch += count;
    // Past the longest capture the codec can carry: nothing later can be a valid edge.
    if (epoch > (MAX_EDGE_TICK >> bits) + 1) fault = true;
    return;
  }
  if ((w & RAW_OPEN_FLAG) != 0) {
    if (readAt != 1) fault = true; // the open entry must come first, once
    openRaw = w & mask;
    return;
  }
  const raw: i32 = w >>> 2;
  if (openRaw < 0 || raw > mask) {
    fault = true;
    return;
  }
  let e: i32 = epoch;
  if ((w & 2) != 0 && raw < (period >> 1)) e++; // latched after a wrap not yet recorded
  accept(buf, e * period + raw - openRaw, w & 1, false);
}

function accept(buf: Int32Array, tick: i32, level: i32, bad: bool): void {
  if (bad || tick < lastTick || tick < 0 || tick > MAX_EDGE_TICK) {
    fault = true;
    return;
  }
  lastTick = tick;
  buf[edgeTotal] = (tick << 1) | level;
  edgeTotal++;
}
