// Part faults: conditions of the part or fixture under which a ring still fits but its number
// cannot be trusted as the part's inductance. The final reading of `measurePart` is judged here;
// a fault is refused with its own code, a diagnosis and the next step, and the would-be reading
// travels with the error (never as a result). `keep_suspect` returns it instead, marked.
//
// The analysis's warnings (analysis/diagnostics.ts) say that something is off; the judgement
// adds what the measure layer knows (the tester's clamp, why the capture ended, the edges as
// recorded) and a threshold on how far off, so that mild cases that still read correctly keep
// their reading and their warning.

import type { CaptureV1 } from "../capture/capture-file.ts";
import type { DeviceProfile } from "../device/profile.ts";
import { formatSi } from "../format/si.ts";
import { MEASURABLE_L_H } from "../values/range.ts";
import { isAnalysisFailure, WarningCode, type PartFaultCode } from "../codes.ts";
import type { Reading } from "./measure-part.ts";
import { edgesOf } from "../capture/edge-list.ts";
import { frequencySwingWithU } from "./frequency-swing.ts";
import { MeasureError, analyzeCapture, fitCapture } from "./read-once.ts";

export type { PartFaultCode } from "../codes.ts";

/** A part fault found in a reading: a stable code and a message with the diagnosis and the next step. */
export interface PartFault {
  code: PartFaultCode;
  message: string;
}

/**
 * A refusal for a part fault. `suspect` is the reading the fault was found in (absent when no
 * ring could be analysed at all): kept for inspection and logs, not a result.
 */
export class PartFaultError extends MeasureError {
  constructor(
    code: PartFaultCode,
    message: string,
    readonly suspect?: Reading,
  ) {
    super(code, message);
  }
}

/**
 * Clipping: the front end's clamp limits the ring. A first cycle off the ring model is named
 * clipping only when the fitted amplitude reaches this share of the clamp voltage; lower down
 * the same warning means a switch transient leaking in, which the fit's rejection handles.
 */
export const CLIP_CLAMP_RATIO = 0.7;
/**
 * Saturation: the inductance swings by 2 |df/f| across one ring (L ∝ 1/f², df/f from the first
 * edge to the last, frequency-swing.ts). Refused above 0.1 %,
 * about the expanded uncertainty of a calibrated tester (docs/calibration.md: ±0.061 %, k = 2),
 * so a value quoted to that accuracy is not an average over a changing part.
 */
export const SATURATION_SWING_REL = 1e-3;
/**
 * ... and only when the swing is also this many of its own standard uncertainties away from zero
 * (frequency-swing.ts: from the edges' timing noise and the number of edges it is fitted over).
 * A swing fitted over a short, fast ring scatters by a few hundred ppm on a part that cannot
 * saturate; 4 standard uncertainties, the analysis's own FREQUENCY_DRIFT level, put a
 * part with no swing at a false refusal of about 6 in 100 000 readings (two-sided, normal
 * scatter), while a real swing over the 0.1 % limit is refused as soon as the ring measures it
 * to a quarter of its size.
 */
export const SATURATION_SWING_Z = 4;
/** Ring still this many times the comparator threshold at the end of a timed-out window: outlasting it. */
export const OUTLAST_THRESHOLD_RATIO = 3;
/** A buffer-full capture outlasts its window only when the ring has not even halved across it. */
export const OUTLAST_DECAY_RATIO = 0.5;
/** Signs of chatter (glitch pairs, breaks) in at least this share of half-cycles make a capture that will not fit chatter. */
export const CHATTER_PAIR_RATIO = 0.1;
/** An interval shorter than this share of the median edge interval is a glitch, not a half-cycle. */
const GLITCH_INTERVAL_RATIO = 1 / 8;
/** Below this the probe's estimate says short rather than a small part (the range starts at 1 µH). */
export const SHORT_MAX_L_H = 0.5e-6;

/** What to do about a short: check the clips and the part, or null the leads with it. */
const SHORT_ADVICE = 'Check that the clips sit on the part\'s two leads and do not touch each other and that the part is not shorted (a solder bridge, a burnt winding); if the clips are shorted on purpose, "henrytick calibrate short" stores this as the leads\' inductance and subtracts it from later readings';

/**
 * A half-cycle this much longer than the same-polarity half-cycles either side of it, while the
 * ring is strong, is a break. A sound ring's half-cycles change smoothly: on the simulated tester
 * no same-polarity neighbour ratio in the first three quarters of a ring passed 1.04 (the shipped
 * demo parts and a Q ≈ 9 150 mH part, 3 to 12 seeds each); a contact that opens for a third of a
 * half-cycle makes 1.3 or more.
 */
const BREAK_NEIGHBOUR_RATIO = 1.2;
/**
 * The same against the median half-cycle of the same polarity, for breaks next to each other.
 * Same polarity because the comparator's thresholds sit off the ring's centre line: the
 * half-cycles above and below differ (by 2 asin(V_th / A) / omega each), more and more as the
 * ring decays, so a median over both takes the short ones on a short, strongly damped ring.
 */
const BREAK_MEDIAN_RATIO = 1.75;

/**
 * What a chattering contact leaves in the edges as recorded. Glitch pairs: intervals far shorter
 * than a half-cycle (the median interval); a ring's edges alternate at its threshold crossings,
 * never closer than a fraction of a half-period, so a comparator toggling inside a half-cycle
 * leaves short ones. Breaks: a half-cycle well over its same-polarity neighbours (two intervals
 * either side) while the ring is strong (its first three quarters, glitches not nearby): the
 * contact opened, the tank held its voltage and the ring stood still. Near its end a clean ring's
 * half-cycles alternate more and more (the peaks near the threshold), so the last quarter is not
 * searched for breaks.
 */
export function chatterOf(c: CaptureV1): { glitch_pairs: number; breaks: number; half_cycles: number } {
  const iv = intervalsOf(c);
  const n = iv.length;
  if (n < 4) return { glitch_pairs: 0, breaks: 0, half_cycles: n };
  const median = medianOf(iv);
  const medianByParity = [medianOf(everyOther(iv, 0)), medianOf(everyOther(iv, 1))];
  // shortBefore[j]: short intervals among the first j, so a window's count is one subtraction.
  const shortBefore = new Uint32Array(n + 1);
  for (let i = 0; i < n; i++) shortBefore[i + 1] = shortBefore[i] + (iv[i] < GLITCH_INTERVAL_RATIO * median ? 1 : 0);
  const short = shortBefore[n];
  let breaks = 0;
  const strongEnd = Math.floor(0.75 * n);
  // From the fourth interval: the first ones carry the switch's transient.
  for (let i = 3; i < strongEnd && i + 2 < n; i++) {
    if (shortBefore[Math.min(n, i + 4)] - shortBefore[Math.max(0, i - 3)] > 0) continue; // a glitch splits its half-cycle: its pieces are no neighbours
    if (over(iv[i], 0.5 * (iv[i - 2] + iv[i + 2]), BREAK_NEIGHBOUR_RATIO) || over(iv[i], medianByParity[i % 2], BREAK_MEDIAN_RATIO)) breaks++;
  }
  // Each glitch pair adds one short interval and splits one half-cycle in three.
  return { glitch_pairs: short, breaks, half_cycles: n - 2 * short };
}

/**
 * An interval over `ratio` times a reference even after the timer's flooring: each edge is
 * floored to a tick, so every interval (and so every mean or median of them) reads within a tick
 * of the truth either way.
 */
function over(interval: number, ref: number, ratio: number): boolean {
  return interval - 1 > ratio * (ref + 1);
}

/** Ticks between consecutive edges: the shared edge list's, or from the pairs of a malformed record. */
function intervalsOf(c: CaptureV1): Float64Array {
  const list = edgesOf(c);
  if (list) return list.intervals;
  const iv = new Float64Array(Math.max(0, c.edges.length - 1));
  for (let i = 1; i < c.edges.length; i++) iv[i - 1] = c.edges[i][0] - c.edges[i - 1][0];
  return iv;
}

/** xs[from], xs[from + 2], … */
function everyOther(xs: Float64Array, from: number): Float64Array {
  const out = new Float64Array(Math.max(0, Math.ceil((xs.length - from) / 2)));
  for (let i = from, j = 0; i < xs.length; i += 2, j++) out[j] = xs[i];
  return out;
}

/** The upper median: the element at n/2 of the sorted values, found by selection (Hoare's FIND) on a copy. */
function medianOf(xs: Float64Array): number {
  const a = xs.slice();
  const k = a.length >> 1;
  let lo = 0;
  let hi = a.length - 1;
  while (lo < hi) {
    const pivot = a[(lo + hi) >> 1];
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) {
        const t = a[i];
        a[i] = a[j];
        a[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else break;
  }
  return a[k];
}

/** Signs of chatter in a capture: glitch pairs plus breaks. */
function chatterSigns(ch: { glitch_pairs: number; breaks: number }): number {
  return ch.glitch_pairs + ch.breaks;
}

/** Fewest signs of chatter in the edges for rejected edges to be blamed on the fixture. */
export const CHATTER_MIN_SIGNS = 2;

function chatterDetail(ch: { glitch_pairs: number; breaks: number; half_cycles: number }): string {
  const parts: string[] = [];
  if (ch.glitch_pairs > 0) parts.push(`${ch.glitch_pairs} toggles inside ${ch.half_cycles} half-cycles`);
  if (ch.breaks > 0) parts.push(`${ch.breaks} break${ch.breaks === 1 ? "" : "s"} where the ring stood still (a half-cycle over ${BREAK_NEIGHBOUR_RATIO}x its neighbours)`);
  return parts.join(", ");
}

const CHATTER_ADVICE = "Check the clips and the fixture's contacts (a loose clip, a bouncing contact, a worn socket), keep the leads short and twisted away from mains wiring, then measure again";

/** The ring's amplitude at the last recorded edge, and at its start, in units of the stopping threshold. */
function ringAtEnd(r: Reading): { end_ratio: number; decay: number } {
  const a = r.analysis;
  const c = r.capture;
  const vStop = Math.max(c.thresholds_v[0], -c.thresholds_v[1]);
  const last = c.edges.length > 0 ? c.edges[c.edges.length - 1][0] / c.tick_hz : 0;
  const aLast = a.amplitude_v * Math.exp(-a.alpha_per_s * last);
  return { end_ratio: aLast / vStop, decay: aLast / a.amplitude_v };
}

type Swing = { df_rel: number; df_rel_u: number; over: string };

/** Over the 0.1 % limit on L and SATURATION_SWING_Z standard uncertainties from zero. */
const significant = (sw: Swing | undefined): sw is Swing =>
  sw !== undefined && 2 * Math.abs(sw.df_rel) > SATURATION_SWING_REL && Math.abs(sw.df_rel) > SATURATION_SWING_Z * sw.df_rel_u;

/**
 * The frequency swing that shows saturation, or undefined: the swing over the whole ring
 * (frequency-swing.ts, from the capture's fit) when it is significant, else the analysis's
 * drift figure when that is. The drift figure covers only the edges the fit kept and so
 * understates a swing, but on a ring with many rejected or missing edges it is the far more
 * precise of the two; either one over the limit and its uncertainty is a refusal.
 */
function saturationSwing(r: Reading, drift: { df_rel: number; df_rel_u: number }): Swing | undefined {
  let whole: Swing | undefined;
  try {
    const sw = frequencySwingWithU(fitCapture(r.capture).fit);
    whole = sw && { ...sw, over: "from the first edge to the last" };
  } catch {
    whole = undefined;
  }
  if (significant(whole)) return whole;
  const kept = { ...drift, over: "over the edges the fit kept" };
  return significant(kept) ? kept : undefined;
}

const has = (r: Reading, code: WarningCode) => r.analysis.warnings.some((w) => w.code === code);
const fixedAdvice = "leave the drive and tank to automatic ranging (options drive, tank unset)";

/**
 * What the judgement needs to know of the tester: its clamp voltage and its longest window
 * (its profile's; a saved capture records them in `device`). A check that needs one it does not
 * know is skipped (a capture saved before they were recorded).
 */
export type TesterLimits = Partial<Pick<DeviceProfile, "clamp_v" | "max_timeout_ms">>;

/** The tester limits a capture records. */
export function limitsOf(capture: CaptureV1): TesterLimits {
  return { clamp_v: capture.device?.clamp_v, max_timeout_ms: capture.device?.max_timeout_ms };
}

/** Judges a reading for part faults; null when it can be given as a result. */
export function judgeReading(r: Reading, profile: TesterLimits): PartFault | null {
  const a = r.analysis;
  const L = formatSi(a.inductance_h, "H", 3);
  // A ring that fits but reads far below the range: the clips are shorted (or the part is), and
  // what rang is the leads' own inductance. Not a reading of a part.
  if (a.inductance_h < SHORT_MAX_L_H) {
    return {
      code: "PART_SHORTED",
      message: `the part reads ${L}, below the ${formatSi(MEASURABLE_L_H.min, "H", 1)} the tester starts at: that is what shorted clips and their leads show (or a shorted part). ${SHORT_ADVICE}`,
    };
  }
  if (has(r, WarningCode.SUSPECTED_CLIPPING) && profile.clamp_v !== undefined && a.amplitude_v >= CLIP_CLAMP_RATIO * profile.clamp_v) {
    return {
      code: "FIRST_CYCLE_CLIPPED",
      message: `the first cycle was clipped: the ring started at about ${a.amplitude_v.toFixed(1)} V, at the ${profile.clamp_v} V clamp, and its first edges sit off the ring model, so the value (about ${L}) rests on a distorted ring. The part carries more current or has more inductance than the setting was chosen for: lower the drive current (a larger drive resistor, a shorter charge_us) or ${fixedAdvice}, then measure again`,
    };
  }
  const sw = has(r, WarningCode.FREQUENCY_DRIFT) && a.drift ? saturationSwing(r, a.drift) : undefined;
  if (sw) {
    const df = sw.df_rel;
    const ppm = df * 1e6;
    const swing = 2 * Math.abs(df) * 100;
    return {
      code: "CORE_SATURATING",
      message: `the inductance changes with the current: the ring frequency ${ppm < 0 ? "falls" : "rises"} by ${Math.abs(ppm).toFixed(0)} ± ${(sw.df_rel_u * 1e6).toFixed(0)} ppm (standard uncertainty) ${sw.over}, so L swings by ${swing.toFixed(2)} % within one ring (about ${L} on average) — the core is near saturation at ${a.amplitude_v.toFixed(2)} V of ring. Lower the drive current (a larger drive resistor or a shorter charge_us; with automatic ranging, a lower max_peak_v) or ${fixedAdvice}; if parts with air cores drift the same way, the tester's tank capacitor is voltage dependent (it must be C0G/film)`,
    };
  }
  // Rejected edges alone are no diagnosis (a clean low-Q ring loses a few at its start and end):
  // the edges must show the contact's marks.
  const ch = chatterOf(r.capture);
  if (has(r, WarningCode.MANY_REJECTED) && chatterSigns(ch) >= CHATTER_MIN_SIGNS) {
    return {
      code: "FIXTURE_CHATTER",
      message: `the fixture chatters: ${a.edges_rejected} of ${a.edges_used + a.edges_rejected} edges were not the ring's (${chatterDetail(ch)}), the contact breaking the ring where a sound one would not. ${CHATTER_ADVICE}`,
    };
  }
  if (ch.breaks >= 1) {
    const end = ringAtEnd(r).end_ratio;
    const abrupt = has(r, WarningCode.RING_TRUNCATED) && r.capture.meta?.end_reason === "quiet" && end >= OUTLAST_THRESHOLD_RATIO;
    return {
      code: "FIXTURE_CHATTER",
      message: `the fixture chatters: ${chatterDetail(ch)}${abrupt ? `, and the ring stopped abruptly while still ${end.toFixed(1)}x the threshold` : ""}: a contact that opens stops the ring and takes its energy, so the value (about ${L}) rests on a broken ring. ${CHATTER_ADVICE}`,
    };
  }
  const end = r.capture.meta?.end_reason;
  if (has(r, WarningCode.RING_TRUNCATED)) {
    const { end_ratio, decay } = ringAtEnd(r);
    const timedOut = end === "timeout" && end_ratio >= OUTLAST_THRESHOLD_RATIO;
    const full = end === "full" && end_ratio >= OUTLAST_THRESHOLD_RATIO && decay >= OUTLAST_DECAY_RATIO;
    if (timedOut || full) {
      // (A saved capture judged by judgeCapture may not record its settings.)
      const limit = r.capture.range?.edge_limit;
      const window = full ? (limit ? `the ${limit}-edge buffer` : "the edge buffer") : r.settings.timeout_ms > 0 ? `the ${r.settings.timeout_ms} ms window` : "the capture window";
      return {
        code: "RING_OUTLASTS_WINDOW",
        message: `the ring outlasts the capture: it was still ${end_ratio.toFixed(1)}x the threshold when ${window} ended, so the decay — and with it Q, ESR and the check that this is one clean ring — is not seen (about ${L}). The part rings longer than this window (a large inductance or a very high Q): ${fixedAdvice} (it sizes the window to the ring${profile.max_timeout_ms !== undefined ? `, up to ${profile.max_timeout_ms} ms` : ""}), or use a shorter charge_us so the ring starts lower and ends sooner`,
      };
    }
  }
  return null;
}

/**
 * A capture that could not be analysed, explained if a part fault did it: a chattering fixture
 * breaks the ring into pieces the analysis cannot follow (NO_RING). Returns the error to throw.
 */
export function explainFailure(e: MeasureError): MeasureError {
  const c = e.capture;
  // A broken ring can also fit to an amplitude the drive cannot give: with a break in its edges,
  // the contact is the cause, not the thresholds.
  const misfit = e.code === "RING_AMPLITUDE_IMPLAUSIBLE";
  if (!c || !(isAnalysisFailure(e.code) || misfit)) return e;
  const ch = chatterOf(c);
  // A break is the contact's own mark; glitch pairs must be many (a noisy capture has a few).
  if (ch.half_cycles <= 0 || (ch.breaks === 0 && (misfit || chatterSigns(ch) < Math.max(CHATTER_MIN_SIGNS, CHATTER_PAIR_RATIO * ch.half_cycles)))) return e;
  return new PartFaultError(
    "FIXTURE_CHATTER",
    `the fixture chatters: ${chatterDetail(ch)} break the ring up so that it cannot be followed (${e.code}). ${CHATTER_ADVICE}`,
  );
}

/**
 * A capture analysed and judged the way `measurePart` judges a reading: a failure explained, a
 * part fault refused with a PartFaultError unless `keep_suspect` (then the reading is marked
 * suspect). `profile` defaults to what the capture records of its tester; `henrytick analyze`
 * reads saved captures this way, with `keep_suspect`, so it prints what `measure` printed.
 */
export function judgeCapture(capture: CaptureV1, profile: TesterLimits = limitsOf(capture), opts: { keep_suspect?: boolean } = {}): Reading {
  let analysis;
  try {
    analysis = analyzeCapture(capture);
  } catch (e) {
    throw e instanceof MeasureError ? explainFailure(e) : e;
  }
  const rg = capture.range;
  const settings = {
    drive: rg?.drive_index ?? 0, tank: rg?.tank_index ?? 0, charge_us: rg?.charge_us ?? 0,
    edge_limit: rg?.edge_limit ?? capture.edges.length, timeout_ms: rg?.timeout_ms ?? 0, quiet_us: rg?.quiet_us ?? 0,
  };
  return finishReading({ capture, analysis, settings }, profile, opts);
}

/** The final step of a reading: judged, then returned, marked suspect on request, or refused. */
export function finishReading(r: Reading, profile: TesterLimits, opts: { keep_suspect?: boolean }): Reading {
  const fault = judgeReading(r, profile);
  if (!fault) return r;
  if (opts.keep_suspect) return { ...r, suspect: fault };
  throw new PartFaultError(fault.code, fault.message, r);
}

/**
 * The probe saw a ring far below the range and no setting can capture it: a short across the
 * clips, or a part far below 1 µH.
 */
export function shortedPart(probe_l_h: number, why: string): PartFaultError {
  return new PartFaultError(
    "PART_SHORTED",
    `the part looks like a short: the probe rang at about ${formatSi(probe_l_h, "H", 2)} (what the clips and leads alone would show), below the 1 µH the tester starts at, and ${why}. ${SHORT_ADVICE}. Check the part's marked value too: below 1 µH it is outside the range`,
  );
}
