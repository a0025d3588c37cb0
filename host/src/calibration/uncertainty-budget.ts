// Uncertainty budget of one inductance value: the standard relative contributions of the fit,
// the tank capacitance, the timebase and the capacitance the reading cannot separate from the
// tank (the part's self-capacitance, strays of an uncalibrated tank), combined in quadrature
// (uncorrelated groups, JCGM 100:2008 §5.1.2) and expanded with k = 2 (§6.2-6.3). Pure.

import type { ReadingBudgetLine } from "../codes.ts";
import type { RingAnalysis } from "../analysis/index.ts";
import type { TwoCapacitanceResult } from "./two-capacitance.ts";

export const BUDGET_GROUPS = ["fit", "capacitance", "timebase", "self-capacitance", "leads", "fixture"] as const;
/** The groups of the two-tank model; `leads` only once the leads are nulled (calibrate short). */
const TWO_TANK_GROUPS = ["fit", "capacitance", "timebase", "self-capacitance", "leads"] as const;
export type BudgetGroup = (typeof BUDGET_GROUPS)[number];

export interface BudgetLine {
  group: BudgetGroup;
  /** Standard relative uncertainty this group contributes to L. */
  rel_u: number;
  /** Where the figure comes from, one line. */
  note: string;
}

export interface UncertaintyBudget {
  /** "apparent": L with the part's Cs lumped into the tank; "corrected": Cs removed (two tanks). */
  measurand: "apparent" | "corrected";
  inductance_h: number;
  lines: BudgetLine[];
  combined_rel_u: number;
  coverage_factor: 2;
  /** Expanded uncertainty U = k u_c, henries. */
  expanded_h: number;
}

export function combineBudget(measurand: UncertaintyBudget["measurand"], inductance_h: number, lines: BudgetLine[]): UncertaintyBudget {
  const combined = Math.hypot(...lines.map((l) => l.rel_u));
  return { measurand, inductance_h, lines, combined_rel_u: combined, coverage_factor: 2, expanded_h: 2 * combined * inductance_h };
}

export interface TimebaseKnowledge {
  /** Standard relative uncertainty of the tick rate the reading used. */
  u_rel: number;
  note: string;
}

/**
 * Budget of a single-tank reading. The analysis supplies fit and capacitance; the timebase line
 * is replaced when the caller knows better (a calibrated timebase, or a tank calibrated against
 * a reference inductor on this very timebase, where the error cancels). The self-capacitance
 * line holds the capacitance the reading cannot separate from the tank (the reading layer's
 * lines, measure/reading-uncertainty.ts): the part's own Cs, and the fixture and switch node
 * until the tank is calibrated. With `cs` (an estimate of the part's Cs) the value is corrected
 * and the part's share is that estimate's uncertainty.
 */
export function singleTankBudget(
  a: RingAnalysis, tank_c_f: number, timebase?: TimebaseKnowledge, cs?: { cs_f: number; u_cs_f: number },
): UncertaintyBudget {
  const from = (name: ReadingBudgetLine) => a.budget.find((b) => b.name === name)?.rel_u ?? 0;
  const stray = from("stray capacitance");
  const lines: BudgetLine[] = [
    { group: "fit", rel_u: from("fit"), note: `edge-model fit, ${a.edges_used} edges` },
    { group: "capacitance", rel_u: from("capacitance"), note: "tank capacitance as applied to the capture" },
    timebase
      ? { group: "timebase", rel_u: 2 * timebase.u_rel, note: timebase.note }
      : { group: "timebase", rel_u: from("timebase"), note: "uncalibrated crystal (analysis default)" },
  ];
  const leads = from("leads");
  if (leads > 0) lines.push({ group: "leads", rel_u: leads, note: "test leads' inductance subtracted (calibrate short)" });
  const fixture = a.budget.find((b) => b.name === "fixture");
  if (fixture) lines.push({ group: "fixture", rel_u: fixture.rel_u, note: "fixture capacitance added to the tank (calibrate open)" });
  const strayNote = stray > 0 ? (fixture ? "; switch node and board strays: tank not calibrated" : "; fixture and switch node: tank not calibrated") : "";
  if (cs) {
    // Corrected value L = L_app C / (C + Cs): relative sensitivity to Cs is -1/(C + Cs).
    const l = (a.inductance_h * tank_c_f) / (tank_c_f + cs.cs_f);
    lines.push({ group: "self-capacitance", rel_u: Math.hypot(cs.u_cs_f / (tank_c_f + cs.cs_f), stray), note: `correction for the part's self-capacitance${strayNote}` });
    return combineBudget("corrected", l, lines);
  }
  lines.push({
    group: "self-capacitance", rel_u: Math.hypot(from("self-capacitance"), stray),
    note: `part's self-capacitance not removed (a two-tank reading gives the corrected value)${strayNote}`,
  });
  return combineBudget("apparent", a.inductance_h, lines);
}

/** Budget of the two-tank corrected inductance, from the grouped propagation of two-capacitance.ts. */
export function twoTankBudget(r: TwoCapacitanceResult): UncertaintyBudget {
  const notes: Record<(typeof TWO_TANK_GROUPS)[number], string> = {
    fit: "fit of the ring on the larger tank",
    capacitance: "larger tank's capacitance and what both tanks share",
    timebase: "timebase, common to both rings",
    "self-capacitance": "ring on the smaller tank and its capacitance (they fix Cs)",
    leads: "the test leads' inductance subtracted (calibrate short)",
  };
  const groups = TWO_TANK_GROUPS.filter((g) => g !== "leads" || r.inductance_groups.some((x) => x.group === "leads"));
  const lines = groups.map((group) => ({
    group,
    rel_u: (r.inductance_groups.find((g) => g.group === group)?.u_h ?? 0) / r.inductance_h,
    note: notes[group],
  }));
  // The grouped lines ignore no correlation here: the model's inputs are independent by construction.
  return { ...combineBudget("corrected", r.inductance_h, lines), expanded_h: 2 * r.u.inductance_h, combined_rel_u: r.u.inductance_h / r.inductance_h };
}
