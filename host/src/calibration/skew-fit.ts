// The comparator's rise/fall delay skew from rings of one reference part on two or more tanks
// (docs/calibration.md, "Comparator skew"). Each ring is fitted with the skew as a free
// parameter (analysis/comparator-timing.ts: estimated with the ring, no prior); a skew is one
// constant time for every ring, while its effect on the phase, wd * skew, and so on Q grows with
// the ring's frequency, so the rings are combined by their weights (inverse variances) and must
// agree: their spread beyond their own uncertainties (Birge ratio, R. T. Birge, Phys. Rev. 40,
// 1932, from memory) widens the result, and rings of one frequency only are refused.

import { fitRing } from "../analysis/analyze-ring.ts";
import type { ComparatorTiming, RingInput } from "../analysis/index.ts";
import { CalibrationError } from "./errors.ts";

/** Rings whose frequencies span less than this ratio cannot tell a skew from a threshold error
 *  that the fit absorbs alike at one frequency (bench practice). */
export const MIN_FREQUENCY_SPAN = 2;

export interface SkewRing {
  f0_hz: number;
  skew_s: number;
  /** Standard deviation of the ring's skew, seconds. */
  sd_s: number;
}

export interface SkewFit {
  skew_s: number;
  /** Standard uncertainty, seconds (Birge-widened when the rings disagree). */
  u_skew_s: number;
  rings: SkewRing[];
  /** chi2 / (n - 1) of the rings about the mean (1 when they agree as their sds say). */
  birge: number;
}

/**
 * @param inputs  the reference part's captures, as the analysis takes them (thresholds calibrated)
 * @param timing  what is known of the comparator besides the skew (noise bandwidth, overdrive);
 *                default: each input's own (`RingInput.comparator`, from its capture)
 */
export function fitSkew(inputs: RingInput[], timing: Omit<ComparatorTiming, "skew_s" | "skew_u_s"> = {}): SkewFit {
  const rings: SkewRing[] = [];
  for (const input of inputs) {
    // The ring's own comparator record (the board's noise and overdrive) unless told otherwise;
    // its skew prior is set aside: the skew is what this fits.
    const s = fitRing({ ...input, comparator: { ...input.comparator, ...timing, skew_s: 0, skew_u_s: Infinity, skew_source: "calibration fit" } });
    const t = s.timing;
    if (!t || !(t.skew_sd_s > 0) || !Number.isFinite(t.skew_s)) continue;
    rings.push({ f0_hz: Math.sqrt(s.p[0] ** 2 + s.p[3] ** 2) / (2 * Math.PI), skew_s: t.skew_s, sd_s: t.skew_sd_s });
  }
  if (rings.length < 2) {
    throw new CalibrationError("NONSENSE_RESULT", `only ${rings.length} of ${inputs.length} rings gave a skew: measure the reference part again on two tanks, with the part firmly on the clips`);
  }
  const fs = rings.map((r) => r.f0_hz);
  if (Math.max(...fs) / Math.min(...fs) < MIN_FREQUENCY_SPAN) {
    throw new CalibrationError(
      "TWO_TANKS_UNAVAILABLE",
      `the rings span ${(Math.max(...fs) / 1e3).toFixed(1)} kHz / ${(Math.min(...fs) / 1e3).toFixed(1)} kHz, under ${MIN_FREQUENCY_SPAN}x: ring the reference part on two tanks whose frequencies differ by at least ${MIN_FREQUENCY_SPAN}x`,
    );
  }
  let sw = 0, swx = 0;
  for (const r of rings) {
    const w = 1 / (r.sd_s * r.sd_s);
    sw += w;
    swx += w * r.skew_s;
  }
  const mean = swx / sw;
  let chi2 = 0;
  for (const r of rings) chi2 += ((r.skew_s - mean) / r.sd_s) ** 2;
  const birge = chi2 / (rings.length - 1);
  return { skew_s: mean, u_skew_s: Math.sqrt(Math.max(1, birge) / sw), rings, birge };
}
