// Checks and splits one incoming frame. The reader keeps field boundaries as offsets into the
// caller's line buffer, so parsing allocates nothing after construction.

import { ERR_ARGUMENT, ERR_CRC, ERR_LINE_TOO_LONG, ERR_SYNTAX, MAX_FIELDS, MAX_LINE_BYTES } from "./constants.ts";
import { crc16Range } from "./crc16.ts";

export class FrameReader {
  buf: Uint8Array;
  starts: Int32Array;
  ends: Int32Array;
  count: i32;
  /** 0 after a good parse, else an ERR_* code saying why the frame was refused. */
  error: i32;

  constructor() {
    this.buf = new Uint8Array(MAX_LINE_BYTES);
    this.starts = new Int32Array(MAX_FIELDS);
    this.ends = new Int32Array(MAX_FIELDS);
    this.count = 0;
    this.error = 0;
  }

  /**
   * Parses line[0, len) (no newline; a trailing carriage return is tolerated).
   * Returns true when the frame is well formed and its CRC matches.
   */
  parse(line: Uint8Array, len: i32): bool {
    this.count = 0;
    this.error = 0;
    this.buf = line;
    if (len > 0 && line[len - 1] == 0x0d) len--;
    if (len > MAX_LINE_BYTES) return this.fail(ERR_LINE_TOO_LONG);
    // Shortest frame: one tag letter, '*', four hex digits.
    if (len < 6 || line[len - 5] != 0x2a) return this.fail(ERR_SYNTAX);
    let sent: i32 = 0;
    for (let i: i32 = len - 4; i < len; i++) {
      const d: i32 = hexValue(line[i]);
      if (d < 0) return this.fail(ERR_SYNTAX);
      sent = (sent << 4) | d;
    }
    const body: i32 = len - 5;
    if (crc16Range(line, 0, body) != sent) return this.fail(ERR_CRC);
    let i: i32 = 0;
    while (i < body) {
      const c: i32 = line[i];
      if (c == 0x20) return this.fail(ERR_SYNTAX); // empty field or leading/double space
      if (c < 0x21 || c > 0x7e || c == 0x2a) return this.fail(ERR_SYNTAX);
      if (this.count >= MAX_FIELDS) return this.fail(ERR_ARGUMENT);
      this.starts[this.count] = i;
      while (i < body && line[i] != 0x20) {
        const d: i32 = line[i];
        if (d < 0x21 || d > 0x7e || d == 0x2a) return this.fail(ERR_SYNTAX);
        i++;
      }
      this.ends[this.count] = i;
      this.count++;
      if (i < body) {
        i++; // the single separating space
        if (i == body) return this.fail(ERR_SYNTAX); // trailing space
      }
    }
    if (this.count == 0) return this.fail(ERR_SYNTAX);
    return true;
  }

  /** True when field `index` equals the ASCII string `s`. */
  fieldIs(index: i32, s: string): bool {
    if (index >= this.count) return false;
    const start: i32 = this.starts[index];
    const n: i32 = this.ends[index] - start;
    if (n != s.length) return false;
    for (let k: i32 = 0; k < n; k++) {
      if (<i32>this.buf[start + k] != s.charCodeAt(k)) return false;
    }
    return true;
  }

  /**
   * Field `index` as a decimal integer in [min, max]. On a bad or out-of-range field sets
   * `error` to ERR_ARGUMENT and returns min; callers check `error` once after reading all fields.
   */
  fieldInt(index: i32, min: i32, max: i32): i32 {
    if (index >= this.count) return this.badInt(min);
    let k: i32 = this.starts[index];
    const end: i32 = this.ends[index];
    let negative: bool = false;
    if (this.buf[k] == 0x2d) {
      negative = true;
      k++;
    }
    if (k >= end || end - k > 10) return this.badInt(min);
    // Accumulate as a negative number: its range reaches -2^31, one further than the positive.
    let v: i32 = 0;
    for (; k < end; k++) {
      const d: i32 = <i32>this.buf[k] - 0x30;
      if (d < 0 || d > 9) return this.badInt(min);
      if (v < -214748364 || (v == -214748364 && d > 8)) return this.badInt(min);
      v = v * 10 - d;
    }
    if (!negative) {
      if (v == -2147483648) return this.badInt(min);
      v = 0 - v; // not -v: in JavaScript that turns 0 into -0
    }
    if (v < min || v > max) return this.badInt(min);
    return v;
  }

  /** Field `index` as exactly four hex digits, or -1. */
  fieldHex16(index: i32): i32 {
    if (index >= this.count) return -1;
    const start: i32 = this.starts[index];
    if (this.ends[index] - start != 4) return -1;
    let v: i32 = 0;
    for (let k: i32 = start; k < start + 4; k++) {
      const d: i32 = hexValue(this.buf[k]);
      if (d < 0) return -1;
      v = (v << 4) | d;
    }
    return v;
  }

  private badInt(fallback: i32): i32 {
    if (this.error == 0) this.error = ERR_ARGUMENT;
    return fallback;
  }

  private fail(code: i32): bool {
    this.error = code;
    this.count = 0;
    return false;
  }
}

/** Value of an upper-case hex digit, or -1. Lower case is refused: the writer never emits it. */
export function hexValue(c: i32): i32 {
  if (c >= 0x30 && c <= 0x39) return c - 0x30;
  if (c >= 0x41 && c <= 0x46) return c - 0x41 + 10;
  return -1;
}
