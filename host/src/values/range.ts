// The inductance range the tester measures, stated once: every message, the help, the README and
// the checks on --nominal / --target take it from here.
//
// The figures come from the ranging design: the probe's safe charge is derived for parts up to
// 1 H (auto-range.ts, PROBE_MAX_L_H), and below about 0.5 µH the probe's ring is read as a short
// (part-fault.ts, SHORT_MAX_L_H), so 1 µH is the lowest value a reading is promised for.

export const MEASURABLE_L_H = { min: 1e-6, max: 1 } as const;

/** "1 µH to 1 H", for messages. */
export const MEASURABLE_TEXT = "1 µH to 1 H";

export const MEASURABLE_RANGE = { ...MEASURABLE_L_H, what: `what the tester measures` };
