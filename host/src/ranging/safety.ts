// Flyback safety figures (standard circuit theory; IEC 61010-1 for the hazardous-live level). Interrupting the current I0 in an inductor L
// returns the energy ½ L I0² as voltage: across a tank C the first peak is about I0 sqrt(L/C),
// reduced by the decay over the first quarter period; a transformer's other winding sees that
// times its turns ratio.

/**
 * Hazardous-live level in normal conditions, IEC 61010-1 (value from memory: 60 V d.c. /
 * 42.4 V peak a.c.; some editions say 70 V d.c. / 46.7 V peak). The lower figure is used.
 */
export const HAZARDOUS_PEAK_V = 42.4;

/** Default ring-peak limit for automatic ranging, comfortably below the hazardous level. */
export const DEFAULT_MAX_PEAK_V = 30;

export function flybackEnergyJ(l_h: number, i0_a: number): number {
  return 0.5 * l_h * i0_a * i0_a;
}

/**
 * Share of the ring's initial amplitude left at its first peak, a quarter period in:
 * e^(-alpha T/4) with alpha = w0 / (2Q), and alpha T/4 = (w0 / 2Q) (pi / 2 w0) = pi / (4 Q).
 */
export function firstPeakShare(q: number): number {
  return Number.isFinite(q) ? Math.exp(-Math.PI / (4 * q)) : 1;
}

/** First peak across the tank: I0 sqrt(L/C) e^(-alpha T/4), with alpha = w0 / (2Q). */
export function flybackPeakV(l_h: number, c_f: number, i0_a: number, q = Infinity): number {
  return i0_a * Math.sqrt(l_h / c_f) * firstPeakShare(q);
}

/** Peak on a transformer's other winding: the pulsed winding's peak times the turns ratio. */
export function otherWindingPeakV(pulsed_peak_v: number, other_turns_per_pulsed_turn: number): number {
  return pulsed_peak_v * other_turns_per_pulsed_turn;
}

/** Share of the board's flyback clamp the default limit stays under (headroom for a fast first peak). */
export const CLAMP_SHARE = 0.8;
/**
 * While the part is known only from the gentle probe, predictions keep this share of the limit:
 * the probe's estimate is rough (auto-range.ts).
 */
export const ROUGH_PREDICTION_SHARE = 0.7;

export interface PeakLimitOptions {
  /**
   * A transformer pulsed on one winding: its other winding sees the pulse times this ratio
   * (other turns per pulsed turn). Ranging then keeps the pulsed ring at limit / ratio so the
   * other winding stays under the limit too. Ratios at or below 1 change nothing.
   */
  other_winding_ratio?: number;
}

export interface PeakLimitCheck {
  ok: boolean;
  /** Why the limit is what it is, or why the request is refused. */
  message: string;
  /** The ring-peak limit on the pulsed winding, volts: what ranging applies. */
  limit_v: number;
  /** The limit before a turns ratio divides it (what the other winding may see), volts. */
  winding_limit_v: number;
  other_winding_ratio?: number;
  /** Where each figure comes from, one short sentence each. */
  basis: string[];
}

/** A voltage with the digits it needs: 28.8 V, 1.52 V, 20.2 V. */
export function volts(v: number): string {
  if (!Number.isFinite(v)) return `${v} V`;
  const digits = v >= 100 ? 0 : v >= 10 ? 1 : 2;
  return `${Number(v.toFixed(digits))} V`;
}

/**
 * The ring-peak limit a user asked for: it may be lowered freely, raised only up to the
 * board's clamp, and above the hazardous-live level only with explicit consent. With a turns
 * ratio, the pulsed winding's limit is divided by it.
 */
export function resolvePeakLimit(requested_v: number | undefined, clamp_v: number, hazardous_ok: boolean, opts: PeakLimitOptions = {}): PeakLimitCheck {
  const fromClamp = CLAMP_SHARE * clamp_v;
  const want = requested_v ?? Math.min(DEFAULT_MAX_PEAK_V, fromClamp);
  const basis: string[] = [];
  if (requested_v !== undefined) basis.push(`${volts(want)}: asked for with max_peak_v`);
  else if (fromClamp < DEFAULT_MAX_PEAK_V) basis.push(`${volts(want)} = ${CLAMP_SHARE * 100} % of this tester's ${volts(clamp_v)} flyback clamp, lower than the ${volts(DEFAULT_MAX_PEAK_V)} default`);
  else basis.push(`${volts(want)}: the default ring-peak limit, below the ${volts(HAZARDOUS_PEAK_V)} hazardous-live level`);
  basis.push(`${volts(HAZARDOUS_PEAK_V)} peak: hazardous-live level of IEC 61010-1; above it only with hazardous_ok`);
  if (clamp_v <= HAZARDOUS_PEAK_V) basis.push(`hazardous_ok cannot take effect on this tester: its ${volts(clamp_v)} clamp is below ${volts(HAZARDOUS_PEAK_V)}, so no limit can pass that level`);
  const fail = (message: string, limit_v: number): PeakLimitCheck => ({ ok: false, message, limit_v, winding_limit_v: limit_v, basis });
  if (!(want > 0)) return fail("the peak limit must be positive", 0);
  const ratio = opts.other_winding_ratio;
  if (ratio !== undefined && !(ratio > 0 && Number.isFinite(ratio))) return fail("the other winding's turns ratio must be a positive number (other turns per pulsed turn, e.g. 19 for 230 V : 12 V)", 0);
  if (want > clamp_v) {
    return fail(`a ${volts(want)} limit is above the tester's ${volts(clamp_v)} flyback clamp; the clamp would clip the ring (choose at most ${volts(clamp_v)})`, clamp_v);
  }
  if (want > HAZARDOUS_PEAK_V && !hazardous_ok) {
    return fail(`a ${volts(want)} ring is above the ${volts(HAZARDOUS_PEAK_V)} peak hazardous-live level (IEC 61010-1); confirm with hazardous_ok only if the part and its other windings are guarded`, HAZARDOUS_PEAK_V);
  }
  basis.push(`${volts(ROUGH_PREDICTION_SHARE * want / Math.max(1, ratio ?? 1))}: ${ROUGH_PREDICTION_SHARE * 100} % of the limit, kept while the part is known only from the first gentle probe`);
  if (ratio !== undefined && ratio > 1) {
    const pulsed = want / ratio;
    basis.splice(basis.length - 1, 0, `${volts(pulsed)} = ${volts(want)} / ${ratio}: the other winding sees ${ratio}× the pulse and must stay under ${volts(want)}`);
    return { ok: true, message: `ring peak limited to ${volts(pulsed)} so the other winding (${ratio}× the pulse) stays under ${volts(want)}`, limit_v: pulsed, winding_limit_v: want, other_winding_ratio: ratio, basis };
  }
  return { ok: true, message: `ring peak limited to ${volts(want)}`, limit_v: want, winding_limit_v: want, ...(ratio !== undefined ? { other_winding_ratio: ratio } : {}), basis };
}
