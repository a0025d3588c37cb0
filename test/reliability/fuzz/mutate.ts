// Seeded input mutators for the fuzz targets: byte-level damage (what a bad link does), token
// substitution with boundary values (what a confused or hostile peer sends), structural edits of
// JSON documents (what a hand-edited or half-written file looks like), and frame re-sealing so a
// mutated frame gets past the CRC and reaches the parser behind it.

import { crc16Range } from "@henrytick/shared-protocol";
import { Random } from "../../../host/src/sim/random.ts";

/** Values that sit on or just past the limits every parser has to get right. */
export const BOUNDARY_TOKENS = [
  "0", "-0", "1", "-1", "2147483647", "2147483648", "-2147483648", "-2147483649", "4294967296", "99999999999",
  "1e309", "-1e309", "NaN", "Infinity", "1.5", "0x10", "00", "+1", "", " ", "*", "**", "\r", "\t", "\u0000", "\u00ff", "ÿÿ",
  "null", "true", "[]", "{}", "\"\"", "A".repeat(130), "9".repeat(40),
];

export class Mutator {
  readonly rng: Random;
  constructor(seed: number) {
    this.rng = new Random(seed);
  }

  int(n: number): number {
    return Math.floor(this.rng.uniform() * n);
  }

  pick<T>(xs: readonly T[]): T {
    return xs[this.int(xs.length)];
  }

  chance(p: number): boolean {
    return this.rng.uniform() < p;
  }

  /** Random bytes (latin1), with printable ASCII and separators overrepresented. */
  randomText(maxLen: number): string {
    const n = this.int(maxLen + 1);
    let s = "";
    for (let i = 0; i < n; i++) {
      const r = this.rng.uniform();
      s += String.fromCharCode(r < 0.6 ? 0x20 + this.int(95) : r < 0.75 ? this.pick([0x20, 0x2a, 0x0a, 0x0d, 0x2d]) : this.int(256));
    }
    return s;
  }

  /** One to `max` random edits of a string: flip, drop, insert, duplicate, swap, truncate, token. */
  mutateText(s: string, max = 3): string {
    const edits = 1 + this.int(max);
    for (let e = 0; e < edits; e++) {
      const at = this.int(s.length + 1);
      switch (this.int(8)) {
        case 0:
          if (s.length > 0) s = s.slice(0, at) + String.fromCharCode((s.charCodeAt(Math.min(at, s.length - 1)) ^ (1 << this.int(8))) & 0xff) + s.slice(at + 1);
          break;
        case 1:
          s = s.slice(0, at) + s.slice(at + 1 + this.int(4));
          break;
        case 2:
          s = s.slice(0, at) + String.fromCharCode(this.int(256)) + s.slice(at);
          break;
        case 3: {
          const len = this.int(16);
          s = s.slice(0, at) + s.slice(at, at + len) + s.slice(at);
          break;
        }
        case 4:
          s = s.slice(0, at);
          break;
        case 5: {
          const b = this.int(s.length + 1);
          s = s.slice(0, Math.min(at, b)) + s.slice(Math.max(at, b)) + s.slice(Math.min(at, b), Math.max(at, b));
          break;
        }
        default:
          s = this.replaceToken(s);
      }
    }
    return s;
  }

  /** Replaces one run of digits or letters with a boundary token. */
  replaceToken(s: string): string {
    const runs = [...s.matchAll(/[0-9A-Za-z.+-]+/g)];
    if (runs.length === 0) return s + this.pick(BOUNDARY_TOKENS);
    const r = this.pick(runs);
    return s.slice(0, r.index!) + this.pick(BOUNDARY_TOKENS) + s.slice(r.index! + r[0].length);
  }

  /** Structural edit of a JSON value: change, retype, delete or add at a random path. */
  mutateJson(v: unknown, depth = 0): unknown {
    if (Array.isArray(v) && v.length > 0 && this.chance(0.8)) {
      const copy = v.slice();
      const i = this.int(copy.length);
      const op = this.int(6);
      if (op === 0) copy.splice(i, 1);
      else if (op === 1) copy.splice(i, 0, copy[i]);
      else copy[i] = this.mutateJson(copy[i], depth + 1);
      return copy;
    }
    if (v !== null && typeof v === "object" && !Array.isArray(v) && this.chance(0.85)) {
      const copy: Record<string, unknown> = { ...(v as Record<string, unknown>) };
      const keys = Object.keys(copy);
      const op = this.int(8);
      if (op === 0 && keys.length > 0) delete copy[this.pick(keys)];
      else if (op === 1) copy[this.pick(["extra", "__proto__", "constructor", "toString", ...keys])] = this.wildValue();
      else if (keys.length > 0) {
        const k = this.pick(keys);
        copy[k] = this.mutateJson(copy[k], depth + 1);
      }
      return copy;
    }
    return this.chance(0.5) && typeof v === "number" ? this.numberNear(v) : this.wildValue();
  }

  numberNear(x: number): number {
    return this.pick([0, -x, x * 1e6, x / 1e6, x + 1, Number.MAX_VALUE, Number.MIN_VALUE, -Number.MIN_VALUE, 2 ** 53, x * (1 + 1e-12)]);
  }

  wildValue(): unknown {
    return this.pick<unknown>([null, true, false, 0, -1, 1e308, -1e-308, 2 ** 31, "", "1", "x", [], {}, [[1, 2]], [1], { a: 1 }, Number.NaN, 0.5]);
  }
}

/** Appends a correct `*XXXX` to a frame body, so a mutated body reaches the parser behind the CRC. */
export function seal(body: string): string {
  const bytes = Uint8Array.from(body, (c) => c.charCodeAt(0) & 0xff);
  const crc = crc16Range(bytes, 0, bytes.length);
  return `${body}*${crc.toString(16).toUpperCase().padStart(4, "0")}`;
}

/** The body of a sealed frame (everything before the last '*'). */
export function body(line: string): string {
  const star = line.lastIndexOf("*");
  return star < 0 ? line : line.slice(0, star);
}
