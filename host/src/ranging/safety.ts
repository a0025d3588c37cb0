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

/** First peak across the tank: I0 sqrt(L/C) e^(-alpha T/4), with alpha = w0 / (2Q). */
export function flybackPeakV(l_h: number, c_f: number, i0_a: number, q = Infinity): number {
  const undamped = i0_a * Math.sqrt(l_h / c_f);
  if (!Number.isFinite(q)) return undamped;
  // alpha T/4 = (w0 / 2Q) (pi / 2 w0) = pi / (4 Q)
  return undamped * Math.exp(-Math.PI / (4 * q));
}

/** Peak on a transformer's other winding: the pulsed winding's peak times the turns ratio. */
export function otherWindingPeakV(pulsed_peak_v: number, other_turns_per_pulsed_turn: number): number {
  return pulsed_peak_v * other_turns_per_pulsed_turn;
}

export interface PeakLimitCheck {
  ok: boolean;
  /** Why the limit is what it is, or why the request is refused. */
  message: string;
  limit_v: number;
}

/**
 * The ring-peak limit a user asked for: it may be lowered freely, raised only up to the
 * board's clamp, and above the hazardous-live level only with explicit consent.
 */
export function resolvePeakLimit(requested_v: number | undefined, clamp_v: number, hazardous_ok: boolean): PeakLimitCheck {
  const want = requested_v ?? Math.min(DEFAULT_MAX_PEAK_V, 0.8 * clamp_v);
  if (!(want > 0)) return { ok: false, message: "the peak limit must be positive", limit_v: 0 };
  if (want > clamp_v) {
    return { ok: false, message: `a ${want} V limit is above the tester's ${clamp_v} V flyback clamp; the clamp would clip the ring (choose at most ${clamp_v} V)`, limit_v: clamp_v };
  }
  if (want > HAZARDOUS_PEAK_V && !hazardous_ok) {
    return {
      ok: false,
      message: `a ${want} V ring is above the ${HAZARDOUS_PEAK_V} V peak hazardous-live level (IEC 61010-1); confirm with --hazardous-ok only if the part and its other windings are guarded`,
      limit_v: HAZARDOUS_PEAK_V,
    };
  }
  return { ok: true, message: `ring peak limited to ${want} V`, limit_v: want };
}
