// CRC-16/CCITT-FALSE (also catalogued as CRC-16/IBM-3740): poly 0x1021, init 0xFFFF,
// no reflection, no final xor. Bitwise rather than table-driven: the firmware budget is
// code size, and a 512-byte table would cost more than the few cycles per byte it saves.

export const CRC16_INIT: i32 = 0xffff;

/** Folds one byte (0..255) into a running CRC and returns the new CRC (0..0xFFFF). */
export function crc16Update(crc: i32, byte: i32): i32 {
  let c: i32 = (crc ^ ((byte & 0xff) << 8)) & 0xffff;
  for (let bit: i32 = 0; bit < 8; bit++) {
    if ((c & 0x8000) != 0) {
      c = ((c << 1) ^ 0x1021) & 0xffff;
    } else {
      c = (c << 1) & 0xffff;
    }
  }
  return c;
}

/** CRC of buf[start, end). */
export function crc16Range(buf: Uint8Array, start: i32, end: i32): i32 {
  let c: i32 = CRC16_INIT;
  for (let i: i32 = start; i < end; i++) {
    c = crc16Update(c, buf[i]);
  }
  return c;
}

/** Folds the four little-endian bytes of a non-negative i32 into a running CRC. */
export function crc16UpdateI32(crc: i32, value: i32): i32 {
  let c: i32 = crc16Update(crc, value & 0xff);
  c = crc16Update(c, (value >> 8) & 0xff);
  c = crc16Update(c, (value >> 16) & 0xff);
  return crc16Update(c, (value >> 24) & 0xff);
}
