// User bins: the value axis cut at edges of the user's choosing (`--bins 9.8u,10.2u` makes three
// bins). A part whose interval value ± U crosses an edge is placed by its value but marked as not
// certainly in that bin. Pure: no I/O.

import { formatSi } from "../format/si.ts";

export interface BinSpec {
  /** Ascending cut points, base unit. */
  edges: number[];
  /** One name per bin (edges.length + 1). */
  names: string[];
}

export interface BinResult {
  index: number;
  name: string;
  /** True when value ± U lies entirely inside the bin. */
  certain: boolean;
}

/** Bins from ascending edges; names are the ranges, e.g. `<9.8µ`, `9.8µ–10.2µ`, `≥10.2µ`. */
export function makeBins(edges: number[], unit = "H", names?: string[]): BinSpec {
  if (edges.length === 0) throw new RangeError("bins need at least one edge value");
  for (let i = 0; i < edges.length; i++) {
    if (!Number.isFinite(edges[i]) || (i > 0 && !(edges[i] > edges[i - 1]))) {
      throw new RangeError("bin edges must be finite and strictly ascending, e.g. 9.8u,10.2u");
    }
  }
  if (names && names.length !== edges.length + 1) {
    throw new RangeError(`${edges.length} edges make ${edges.length + 1} bins, but ${names.length} names were given`);
  }
  const f = (v: number) => formatSi(v, unit, 3).replace(" ", "");
  const auto = [`<${f(edges[0])}`];
  for (let i = 1; i < edges.length; i++) auto.push(`${f(edges[i - 1])}–${f(edges[i])}`);
  auto.push(`≥${f(edges[edges.length - 1])}`);
  return { edges: edges.slice(), names: names ?? auto };
}

export function binOf(spec: BinSpec, value: number, U: number): BinResult {
  let index = 0;
  while (index < spec.edges.length && value >= spec.edges[index]) index++;
  const lo = index === 0 ? -Infinity : spec.edges[index - 1];
  const hi = index === spec.edges.length ? Infinity : spec.edges[index];
  return { index, name: spec.names[index], certain: value - U >= lo && value + U < hi };
}
