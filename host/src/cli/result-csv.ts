// One reading as CSV: a header line and one row per result, the figures of the result JSON that
// a spreadsheet wants (SI units in the column names, as in the JSON keys). Used by measure,
// measure --watch (with reading, time and stability in front) and analyze.

import { csvField } from "../format/csv.ts";
import type { ResultJson } from "../measure/result.ts";

const COLUMNS = [
  "label", "inductance_h", "inductance_u_h", "q", "q_u", "esr_ohm", "esr_u_ohm", "f0_hz", "f0_u_hz",
  "ring_amplitude_v", "edges_used", "edges_rejected", "tank_c_f", "warnings", "suspect",
] as const;

export function csvHeader(extra: string[] = []): string {
  return [...extra, ...COLUMNS].join(",") + "\n";
}

export function csvRow(r: ResultJson, extra: unknown[] = []): string {
  const values: Record<(typeof COLUMNS)[number], unknown> = {
    label: r.label, inductance_h: r.inductance_h, inductance_u_h: r.inductance_u_h, q: r.q, q_u: r.q_u,
    esr_ohm: r.esr_ohm, esr_u_ohm: r.esr_u_ohm, f0_hz: r.f0_hz, f0_u_hz: r.f0_u_hz, ring_amplitude_v: r.ring_amplitude_v,
    edges_used: r.edges_used, edges_rejected: r.edges_rejected, tank_c_f: r.settings.tank_c_f,
    warnings: r.warnings.map((w) => w.code).join(" "),
    // The part fault of a reading kept with --keep-suspect; empty for a verified reading.
    suspect: r.suspect?.code,
  };
  return [...extra.map(csvField), ...COLUMNS.map((c) => csvField(values[c]))].join(",") + "\n";
}
