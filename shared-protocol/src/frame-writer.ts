// Builds one outgoing frame: `TAG field field ...*XXXX\n`, where XXXX is the CRC-16 of
// every byte before the `*`, in upper-case hex. One writer is allocated at start and reused;
// nothing here allocates, so the firmware can call it from its main loop.

import { MAX_LINE_BYTES } from "./constants.ts";
import { crc16Range } from "./crc16.ts";

const HEX_DIGITS: string = "0123456789ABCDEF";

export class FrameWriter {
  buf: Uint8Array;
  len: i32;
  /** Set when a put did not fit; finish() then refuses to produce the frame. */
  overflow: bool;

  constructor() {
    this.buf = new Uint8Array(MAX_LINE_BYTES);
    this.len = 0;
    this.overflow = false;
  }

  /** Starts a new frame with its tag (letters only, no space). */
  begin(tag: string): void {
    this.len = 0;
    this.overflow = false;
    this.putChars(tag);
  }

  /** Appends one raw byte. Reserves room for the 6-byte `*XXXX\n` suffix. */
  putByte(c: i32): void {
    if (this.len >= MAX_LINE_BYTES - 6) {
      this.overflow = true;
      return;
    }
    this.buf[this.len] = <u8>c;
    this.len++;
  }

  /** Appends the characters of an ASCII string with no separator. */
  putChars(s: string): void {
    for (let i: i32 = 0; i < s.length; i++) {
      this.putByte(s.charCodeAt(i));
    }
  }

  /** Appends a separator and a token (caller guarantees no space, `*` or newline in it). */
  putText(s: string): void {
    this.putByte(0x20);
    this.putChars(s);
  }

  /** Appends a separator and a decimal integer. */
  putInt(v: i32): void {
    this.putByte(0x20);
    if (v < 0) {
      this.putByte(0x2d);
      // -2^31 cannot be negated in an i32; the protocol never sends it.
      v = -v;
    }
    this.putDigits(v);
  }

  /** Appends a separator and a value as exactly four upper-case hex digits. */
  putHex16(v: i32): void {
    this.putByte(0x20);
    this.putHexRaw(v);
  }

  /** Appends a separator only; used before a run of putByte calls. */
  putSeparator(): void {
    this.putByte(0x20);
  }

  /** Closes the frame with its CRC and newline. Returns the frame length, or 0 on overflow. */
  finish(): i32 {
    if (this.overflow) return 0;
    const crc: i32 = crc16Range(this.buf, 0, this.len);
    this.buf[this.len] = 0x2a; // '*'
    this.len++;
    for (let shift: i32 = 12; shift >= 0; shift -= 4) {
      this.buf[this.len] = <u8>HEX_DIGITS.charCodeAt((crc >> shift) & 0xf);
      this.len++;
    }
    this.buf[this.len] = 0x0a;
    this.len++;
    return this.len;
  }

  private putDigits(v: i32): void {
    // Digits come out most significant first, so find the largest power of ten first.
    let div: i32 = 1;
    while (v / div >= 10) div = div * 10;
    while (div > 0) {
      const digit: i32 = (v / div) % 10;
      this.putByte(0x30 + (digit | 0));
      div = (div / 10) | 0;
    }
  }

  /** Appends exactly four upper-case hex digits with no separator. */
  putHexRaw(v: i32): void {
    for (let shift: i32 = 12; shift >= 0; shift -= 4) {
      this.putByte(HEX_DIGITS.charCodeAt((v >> shift) & 0xf));
    }
  }
}
