// A capture's edges in the one form every step after the transfer reads them: the capture
// checks, the analysis input and the part-fault judgement. The device's stream reader decodes
// into it (device/stream-reader.ts: its arrays are the decoder's own), the capture record keeps
// [tick, level] pairs made from it (the file format, docs/capture-format.md) and finds it again;
// a record read from a file gets one built from its pairs on first use. The intervals between
// edges are worked out once, when first asked for.

import type { CaptureV1 } from "./capture-file.ts";

export class EdgeList {
  private iv: Float64Array | null = null;

  /**
   * @param ticks timer ticks since the switch opened, non-decreasing integers: the decoder's
   *   Int32Array (the protocol keeps ticks below 2^30), or float64 for a capture file's, which
   *   may state any tick up to 2^53
   * @param levels the comparator's level after each edge: 1 after a rising, 0 after a falling edge
   */
  constructor(readonly ticks: Int32Array | Float64Array, readonly levels: Uint8Array) {
    if (levels.length !== ticks.length) throw new RangeError(`edge list: ${ticks.length} ticks but ${levels.length} levels`);
  }

  static from(ticks: ArrayLike<number>, levels: ArrayLike<number>): EdgeList {
    return new EdgeList(Float64Array.from(ticks), Uint8Array.from(levels));
  }

  /**
   * The list of a record's pairs, or null when a pair is not [non-negative safe integer, 0 or 1]
   * (such a record is left to the checks that refuse it, with their own messages).
   */
  static fromPairs(pairs: readonly (readonly [number, number])[]): EdgeList | null {
    const n = pairs.length;
    const ticks = new Float64Array(n);
    const levels = new Uint8Array(n);
    for (let i = 0; i < n; i++) {
      const p = pairs[i];
      if (!Array.isArray(p)) return null;
      const k = p[0];
      const lv = p[1];
      if (!Number.isSafeInteger(k) || k < 0 || (lv !== 0 && lv !== 1)) return null;
      ticks[i] = k;
      levels[i] = lv;
    }
    return new EdgeList(ticks, levels);
  }

  get n(): number {
    return this.ticks.length;
  }

  /** Ticks from each edge to the next (n - 1 of them), computed on first use. */
  get intervals(): Float64Array {
    if (!this.iv) {
      const n = this.n;
      const iv = new Float64Array(Math.max(0, n - 1));
      for (let i = 1; i < n; i++) iv[i - 1] = this.ticks[i] - this.ticks[i - 1];
      this.iv = iv;
    }
    return this.iv;
  }

  /** The capture record's [tick, level] pairs. */
  toPairs(): [number, number][] {
    const out = new Array<[number, number]>(this.n);
    for (let i = 0; i < this.n; i++) out[i] = [this.ticks[i], this.levels[i]];
    return out;
  }

  /** True while `pairs` still holds these edges (checked at both ends and the middle). */
  matches(pairs: readonly (readonly [number, number])[]): boolean {
    const n = this.n;
    if (pairs.length !== n) return false;
    if (n === 0) return true;
    for (const i of [0, n >> 1, n - 1]) {
      const p = pairs[i];
      if (!p || p[0] !== this.ticks[i] || p[1] !== this.levels[i]) return false;
    }
    return true;
  }
}

/** Edge lists by the pairs array they were built from or for. */
const built = new WeakMap<object, EdgeList>();

/** The record's [tick, level] pairs for `list`, remembered so that edgesOf finds the list again. */
export function pairsFor(list: EdgeList): [number, number][] {
  const pairs = list.toPairs();
  built.set(pairs, list);
  return pairs;
}

/**
 * The capture's edges as an edge list, built on first use and shared afterwards; null when the
 * record's pairs are malformed (see EdgeList.fromPairs).
 */
export function edgesOf(c: Pick<CaptureV1, "edges">): EdgeList | null {
  if (!Array.isArray(c.edges)) return null;
  const known = built.get(c.edges);
  if (known && known.matches(c.edges)) return known;
  const list = EdgeList.fromPairs(c.edges);
  if (list) built.set(c.edges, list);
  return list;
}
