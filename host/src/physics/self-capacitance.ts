// Self-capacitance of a single-layer solenoid from Medhurst's measurements
// (R. G. Medhurst, "H.F. resistance and self-capacitance of single-layer solenoids",
// Wireless Engineer 24, 1947, pp. 35–43 and 80–92): Cs[pF] = H · D[cm], where the shape factor H
// depends only on length/diameter. Medhurst found Cs nearly independent of the number of turns
// and pitch, which is why the coil designer needs nothing but the outline here.
//
// H is interpolated linearly in l/D between table rows; every row says where its number comes
// from, and lookups report when a from-memory row took part so callers can say so.

import { requirePositiveFinite } from "./solenoid.ts";

export type MedhurstRowSource =
  /** From Medhurst 1947 (read in the source). */
  | "notes"
  /** Medhurst's table as quoted second-hand (Tesla-coil mailing list post by M. S.
   *  Rzeszotarski, January 1997, citing Wireless Engineer 24 (1947) 35 and 80). */
  | "secondary"
  /** Value from memory, not confirmed against the paper. */
  | "memory";

export interface MedhurstRow {
  l_over_d: number;
  h: number;
  source: MedhurstRowSource;
}

/** Medhurst's H against l/D, ascending. Rows 6–9 are left out: linear between 5 and 10. */
export const MEDHURST_TABLE: readonly MedhurstRow[] = [
  { l_over_d: 0.1, h: 0.96, source: "memory" },
  { l_over_d: 0.15, h: 0.79, source: "memory" },
  { l_over_d: 0.2, h: 0.7, source: "memory" },
  { l_over_d: 0.25, h: 0.64, source: "memory" },
  { l_over_d: 0.3, h: 0.6, source: "memory" },
  { l_over_d: 0.35, h: 0.57, source: "memory" },
  { l_over_d: 0.4, h: 0.54, source: "memory" },
  { l_over_d: 0.45, h: 0.52, source: "memory" },
  { l_over_d: 0.5, h: 0.5, source: "notes" },
  { l_over_d: 0.6, h: 0.48, source: "memory" },
  { l_over_d: 0.7, h: 0.47, source: "memory" },
  { l_over_d: 0.8, h: 0.46, source: "memory" },
  { l_over_d: 0.9, h: 0.46, source: "memory" },
  { l_over_d: 1, h: 0.46, source: "notes" },
  { l_over_d: 1.5, h: 0.47, source: "secondary" },
  { l_over_d: 2, h: 0.5, source: "notes" },
  { l_over_d: 2.5, h: 0.56, source: "secondary" },
  { l_over_d: 3, h: 0.61, source: "secondary" },
  { l_over_d: 3.5, h: 0.67, source: "secondary" },
  { l_over_d: 4, h: 0.72, source: "notes" },
  { l_over_d: 4.5, h: 0.77, source: "secondary" },
  { l_over_d: 5, h: 0.81, source: "secondary" },
  { l_over_d: 10, h: 1.32, source: "notes" },
];

export interface MedhurstLookup {
  /** Shape factor H, pF per cm of diameter. */
  h: number;
  /** True when a from-memory row contributed to the interpolated value. */
  from_memory: boolean;
}

/** Medhurst's H at a length/diameter ratio inside the table (0.1 … 10). */
export function medhurstH(lengthOverDiameter: number): MedhurstLookup {
  requirePositiveFinite("lengthOverDiameter", lengthOverDiameter);
  const first = MEDHURST_TABLE[0];
  const last = MEDHURST_TABLE[MEDHURST_TABLE.length - 1];
  if (lengthOverDiameter < first.l_over_d || lengthOverDiameter > last.l_over_d) {
    throw new RangeError(
      `lengthOverDiameter must lie within Medhurst's table (${first.l_over_d} to ${last.l_over_d}), got ${lengthOverDiameter}`,
    );
  }
  let i = 0;
  while (MEDHURST_TABLE[i + 1].l_over_d < lengthOverDiameter) i++;
  const lo = MEDHURST_TABLE[i];
  const hi = MEDHURST_TABLE[i + 1];
  if (lengthOverDiameter === lo.l_over_d) return { h: lo.h, from_memory: lo.source === "memory" };
  if (lengthOverDiameter === hi.l_over_d) return { h: hi.h, from_memory: hi.source === "memory" };
  const t = (lengthOverDiameter - lo.l_over_d) / (hi.l_over_d - lo.l_over_d);
  return {
    h: lo.h + t * (hi.h - lo.h),
    from_memory: lo.source === "memory" || hi.source === "memory",
  };
}

export interface SolenoidOutline {
  /** Diameter to the wire centres, metres. */
  mean_diameter_m: number;
  /** Winding length, metres. */
  length_m: number;
}

/** Medhurst self-capacitance, farads: Cs = H · D[cm] pF. */
export function medhurstSelfCapacitanceF(outline: SolenoidOutline): number {
  if (typeof outline !== "object" || outline === null) throw new TypeError("outline must be an object");
  const d = requirePositiveFinite("mean_diameter_m", outline.mean_diameter_m);
  const l = requirePositiveFinite("length_m", outline.length_m);
  const { h } = medhurstH(l / d);
  return h * (d * 100) * 1e-12;
}
