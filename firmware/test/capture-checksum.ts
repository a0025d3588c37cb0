// Test helper: the checksum the capture merge's replay prints (cm_checksum in
// firmware/ports/common/merge-replay.c), computed independently on the host.

/** 32-bit FNV-1a over the words' little-endian bytes. */
export function fnv1a(words: number[]): number {
  let h = 2166136261;
  for (const w of words) {
    for (let b = 0; b < 4; b++) {
      h ^= (w >>> (8 * b)) & 0xff;
      h = Math.imul(h, 16777619) >>> 0;
    }
  }
  return h >>> 0;
}
