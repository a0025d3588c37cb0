// ngspice ring-downs through the physical comparator at the reference board's values, analysed
// (spice-comparator-cases.ts; Debian package "ngspice"). The table in docs/performance.md
// ("ngspice cross-check") comes from the same cases over 20 seeds; this test keeps it over 4.
//
// L: every seed within its stated U (k = 2), against L (C + Cs)/C of the §1 circuit.
// Q: on the two fast rings (230 kHz and up) at least 3 of 4 seeds within U. On the four slow rings
// (28 kHz and below) Q reads 0.6-1.1 % high, 2-3 U, from the comparator's first passage on the
// slow tail (with the noise off it is within U: docs/performance.md), and only some seeds carry a
// warning: those cases are marked as failing until the analysis accounts for first passage.

import { describe, expect, it } from "vitest";
import { hasNgspice } from "./spice.ts";
import { CASES, caseRecord, crossCheck } from "./spice-comparator-cases.ts";
import type { CrossCheckCase, CrossCheckRow } from "./spice-comparator-cases.ts";

const SEEDS = 4;
/** The slow rings whose Q the analysis does not yet get within U. */
const Q_NOT_YET = new Set([CASES[2].name, CASES[3].name, CASES[4].name, CASES[5].name]);

const rows = new Map<string, CrossCheckRow[]>();
function rowsOf(c: CrossCheckCase): CrossCheckRow[] {
  let r = rows.get(c.name);
  if (!r) {
    const record = caseRecord(c);
    r = Array.from({ length: SEEDS }, (_, k) => crossCheck(c, record, k + 1));
    rows.set(c.name, r);
  }
  return r;
}

function qHonest(c: CrossCheckCase): void {
  const r = rowsOf(c);
  expect(r.filter((x) => Math.abs(x.q_err_rel) <= x.q_u_rel).length).toBeGreaterThanOrEqual(SEEDS - 1);
  // Nothing beyond 3 U without a warning.
  for (const x of r) if (x.warnings.length === 0) expect(Math.abs(x.q_err_rel)).toBeLessThanOrEqual(3 * x.q_u_rel);
}

const title = "ngspice ring-downs through the physical comparator" + (hasNgspice ? "" : " (skipped: Debian package ngspice not installed)");

describe.skipIf(!hasNgspice)(title, () => {
  it.each(CASES)("$name: L within U on every seed", (c) => {
    for (const x of rowsOf(c)) {
      expect(x.edges).toBeGreaterThan(100);
      expect(Math.abs(x.l_err_rel)).toBeLessThanOrEqual(x.l_u_rel);
    }
  });
  it.each(CASES.filter((c) => !Q_NOT_YET.has(c.name)))("$name: Q within U", (c) => qHonest(c));
  it.fails.each(CASES.filter((c) => Q_NOT_YET.has(c.name)))("$name: Q within U (not yet: first-passage bias on the slow tail)", (c) => qHonest(c));
});
