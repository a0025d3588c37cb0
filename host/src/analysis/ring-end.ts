// Where a capture stops following its ring (docs/method.md §2b). A comparator whose hysteresis
// (the gap between its two thresholds) is not wide against its input noise fires extra edges: near
// each crossing once the ring passes through the gap slowly against the noise's own pace (chatter:
// an edge, the opposite one and the same one again within a small part of a period), and at
// random once the ring has died and the noise alone crosses both thresholds. Such edges come at
// intervals no ring makes, and they come more often as the ring decays. Neither the edge model nor
// the first-passage correction describes them, and the first crossings of a chattering stretch
// are decided by the noise as much as by the ring: the analysis uses the ring up to where they
// begin.

/** An interval between consecutive edges below this fraction of the period is one no ring makes:
 *  two edges of a ring are at least about a quarter period apart, even where it grazes a
 *  threshold near its peak. */
export const SHORT_INTERVAL_PERIODS = 0.05;
/** Chatter begins where SHORT_IN_WINDOW of WINDOW_EDGES consecutive intervals are short ... */
const WINDOW_EDGES = 32;
const SHORT_IN_WINDOW = 3;
/** ... and only if short intervals stay at least this much more frequent from there on than before
 *  (by their count less three Poisson sd)
 *  (stray glitches come at one rate all through a capture; noise-fired edges grow with the decay;
 *  the rate before is counted as if one window at the threshold preceded the capture),
 *  and make at least MIN_RATE_AFTER of the intervals from there on (bench practice). */
const RATE_RATIO = 4;
const MIN_RATE_AFTER = 0.05;
/** The period is taken from the first edges, where the ring is largest. */
const PERIOD_EDGES = 256;

export interface RingExtent {
  /** Edges [0, end) follow the ring; end = n: all of them. */
  end: number;
  /** Fraction of short intervals before `end` and from it on (0 when end = n). */
  rate_before: number;
  rate_after: number;
}

/** Median interval between consecutive edges of one level among the first PERIOD_EDGES edges. */
function earlyPeriod(t: ArrayLike<number>, rising: ArrayLike<number>): number {
  const d: number[] = [];
  const last = [-1, -1];
  const n = Math.min(t.length, PERIOD_EDGES);
  for (let k = 0; k < n; k++) {
    const lv = rising[k] === 1 ? 1 : 0;
    if (last[lv] >= 0 && t[k] > t[last[lv]]) d.push(t[k] - t[last[lv]]);
    last[lv] = k;
  }
  if (d.length === 0) return NaN;
  d.sort((a, b) => a - b);
  return d[d.length >> 1];
}

/**
 * The first edge from which on the capture no longer follows a ring (ringExtent.end): the start
 * of the first window of WINDOW_EDGES intervals with SHORT_IN_WINDOW short ones, provided short
 * intervals are RATE_RATIO times more frequent from there to the end than before it.
 */
export function ringExtent(t: ArrayLike<number>, rising: ArrayLike<number>): RingExtent {
  const n = t.length;
  const none: RingExtent = { end: n, rate_before: 0, rate_after: 0 };
  const period = earlyPeriod(t, rising);
  if (!(period > 0) || n < 2 * WINDOW_EDGES) return none;
  const short = new Uint8Array(n);
  const after = new Int32Array(n + 1);
  for (let k = 1; k < n; k++) short[k] = t[k] - t[k - 1] < SHORT_INTERVAL_PERIODS * period ? 1 : 0;
  for (let k = n - 1; k >= 0; k--) after[k] = after[k + 1] + short[k];
  let inWindow = 0;
  for (let k = 1; k < n; k++) {
    inWindow += short[k];
    if (k > WINDOW_EDGES) inWindow -= short[k - WINDOW_EDGES];
    if (inWindow < SHORT_IN_WINDOW) continue;
    // The window (k - WINDOW_EDGES, k]: edges from its start on are suspect.
    const end = Math.max(0, k - WINDOW_EDGES);
    // The rate before, as if one window at the threshold preceded the capture: a short clean
    // stretch before a cluster of glitches does not make their rate look new.
    const before = (after[1] - after[end] + SHORT_IN_WINDOW) / (Math.max(0, end - 1) + WINDOW_EDGES);
    // The count from there on, less three of its Poisson sd, must still show the higher rate: a
    // few glitches close to the capture's end do not.
    const a = after[end];
    const rest = a / (n - end);
    const low = (a - 3 * Math.sqrt(a)) / (n - end);
    if (low >= MIN_RATE_AFTER && low >= RATE_RATIO * before) return { end, rate_before: before, rate_after: rest };
  }
  return none;
}

/**
 * Where a ring's envelope has decayed to within TAIL_SIGMAS of the noise rms of the farther
 * threshold: past that, whether an edge comes at all near a peak is decided by the noise (the
 * ring + noise reaches the threshold only when the noise is high there), so the edges there are
 * a selected sample, neither a ramp's first passage nor the zero-mean level crossing the grazing
 * form assumes, and they read the amplitude high at the end of the ring, i.e. Q high (on a 16 kHz
 * Q 250 ring at three times the board's noise, 4 U high, comparator-timing.test.ts). Used when
 * the comparator's input noise is continuous (first passage, docs/method.md §2b).
 */
export const TAIL_SIGMAS = 3;

/**
 * The selection needs time: a ring whose peak sits near the threshold stays within TAIL_SIGMAS
 * sigma of it for about 2 sqrt(2 TAIL_SIGMAS sigma / (V wd^2)), and only when that dwell spans many
 * noise correlation times tau = 1 / (2 pi B) does the noise get many tries at firing the edge.
 * Where it spans few, an edge there sees about one noise value, as the grazing form assumes, and
 * those edges carry the amplitude that symmetric thresholds read the decay from (left out on a
 * 500 kHz ring with +-20 mV thresholds, dwell about 3 tau, L and Q efficiency fell from 0.96 to
 * 0.6). Applied from TAIL_DWELL_TAUS on (bench practice: 16-34 kHz rings dwell 25-140 tau).
 */
export const TAIL_DWELL_TAUS = 10;

/** Whether the decayed tail's edges are selected by the noise (the dwell rule above). */
export function tailSelects(wd: number, vmax_v: number, sigma_v: number, noise_bw_hz: number): boolean {
  if (!(wd > 0) || !(vmax_v > 0) || !(sigma_v > 0) || !(noise_bw_hz > 0)) return false;
  const dwell = 2 * Math.sqrt((2 * TAIL_SIGMAS * sigma_v) / (vmax_v * wd * wd));
  return dwell >= (TAIL_DWELL_TAUS / (2 * Math.PI * noise_bw_hz));
}

/**
 * ... and only on offset thresholds, whose high time at clean crossings reads the decay all
 * through the ring, so that the tail is a small, biased part of what they say. With symmetric
 * thresholds the amplitude shows only through asin(V/A), largest in the tail: leaving it out cost
 * more than its bias (a 73 kHz Q 120 ring at +-20 mV and three times the board's noise: L
 * efficiency 0.66 to 0.38, U(L) covering 96 % to 90 % of the seeds). Offset: the thresholds'
 * mean away from zero by at least half the farther one (the board's 35 / -5 mV: 0.86).
 */
export function offsetThresholds(vh_v: number, vl_v: number): boolean {
  return Math.abs(vh_v + vl_v) >= 0.5 * Math.max(Math.abs(vh_v), Math.abs(vl_v));
}

/** The first edge at or after the time the envelope exp(lnA - alpha t) falls to the farther
 *  threshold plus TAIL_SIGMAS sigma_v (t.length: none). */
export function tailEnd(t: ArrayLike<number>, ln_a0: number, alpha: number, vmax_v: number, sigma_v: number): number {
  const n = t.length;
  if (!(alpha > 0) || !(sigma_v > 0) || !(vmax_v > 0)) return n;
  const tEnd = (ln_a0 - Math.log(vmax_v + TAIL_SIGMAS * sigma_v)) / alpha;
  let k = n;
  while (k > 0 && t[k - 1] >= tEnd) k--;
  return k;
}
