// IEC 60063 preferred-number series E6 ... E192 and the nearest preferred value to a reading.
// E6-E24 are published tables (two significant figures; several E24 members differ from rounding
// the geometric series, so they are listed, not computed). E48-E192 are three significant figures
// of 10^(i/n), with the published exception 9.20 (not 9.19) in E192 (IEC 60063,
// value from memory). Pure: no I/O.

export type SeriesName = "E6" | "E12" | "E24" | "E48" | "E96" | "E192";
export const SERIES_NAMES: readonly SeriesName[] = ["E6", "E12", "E24", "E48", "E96", "E192"];

const E24 = [1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1];
const E12 = E24.filter((_, i) => i % 2 === 0);
const E6 = E24.filter((_, i) => i % 4 === 0);

function threeFigureSeries(n: number): number[] {
  const out: number[] = [];
  for (let i = 0; i < n; i++) out.push(Number((10 ** (i / n)).toPrecision(3)));
  if (n === 192) out[out.indexOf(9.19)] = 9.2;
  return out;
}

const CACHE = new Map<SeriesName, readonly number[]>();

/** Members of a series in the decade [1, 10), ascending. */
export function seriesValues(name: SeriesName): readonly number[] {
  let v = CACHE.get(name);
  if (!v) {
    switch (name) {
      case "E6": v = E6; break;
      case "E12": v = E12; break;
      case "E24": v = E24; break;
      case "E48": v = threeFigureSeries(48); break;
      case "E96": v = threeFigureSeries(96); break;
      case "E192": v = threeFigureSeries(192); break;
      default: throw new RangeError(`unknown E-series "${name as string}": use one of ${SERIES_NAMES.join(", ")}`);
    }
    CACHE.set(name, Object.freeze(v.slice()));
  }
  return CACHE.get(name)!;
}

/** Accepts `E12`, `e12` or `12`. */
export function parseSeriesName(text: string): SeriesName {
  const t = text.trim().toUpperCase();
  const name = (t.startsWith("E") ? t : `E${t}`) as SeriesName;
  if (!SERIES_NAMES.includes(name)) throw new RangeError(`unknown E-series "${text}": use one of ${SERIES_NAMES.join(", ")}`);
  return name;
}

export interface Preferred {
  series: SeriesName;
  /** The preferred value, in the reading's unit. */
  value: number;
  /** (reading - preferred) / preferred. */
  deviation_rel: number;
}

/**
 * The member of `series` nearest to `value` on a logarithmic scale (the series are geometric, so
 * "nearest" means the smallest ratio), across decade boundaries.
 */
export function nearestPreferred(value: number, series: SeriesName): Preferred {
  if (!(value > 0) || !Number.isFinite(value)) throw new RangeError(`a preferred value needs a positive reading, got ${value}`);
  const decade = Math.floor(Math.log10(value));
  const base = 10 ** decade;
  const mantissa = value / base;
  let best = 1;
  let bestDist = Infinity;
  // Candidates: this decade's members plus 10 (the next decade's 1.0).
  for (const m of [...seriesValues(series), 10]) {
    const d = Math.abs(Math.log(mantissa / m));
    if (d < bestDist) {
      bestDist = d;
      best = m;
    }
  }
  const preferred = Number((best * base).toPrecision(4));
  return { series, value: preferred, deviation_rel: value / preferred - 1 };
}
