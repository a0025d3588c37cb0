// Human-readable output for the terminal. Layout: one block per reading, value first.

import type { ResultJson } from "../measure/result.ts";
import { formatSi, formatWithUncertainty } from "../format/si.ts";
import type { SelfCapacitanceReading, UncertaintyBudget } from "../calibration/index.ts";

export function renderReading(r: ResultJson, title: string): string {
  const L = formatWithUncertainty(r.inductance_h, r.inductance_u_h, "H");
  const Q = formatWithUncertainty(r.q, r.q_u, "");
  const R = formatWithUncertainty(r.esr_ohm, r.esr_u_ohm, "Ω");
  const f = formatWithUncertainty(r.f0_hz, r.f0_u_hz, "Hz");
  const lines = [
    r.suspect ? `── ${title}   SUSPECT (kept on request: not a verified reading)` : `── ${title}`,
    `   inductance   ${L.value} ${L.unit}  ± ${L.u} ${L.unit}   (k = 2)`,
    `   Q            ${Q.value}  ± ${Q.u}`,
    `   ESR          ${R.value} ${R.unit}  ± ${R.u} ${R.unit}`,
    // Printed with its U, so its digits are the ones the uncertainty supports (Q and ESR hold at this frequency).
    `   frequency    ${f.value} ${f.unit}  ± ${f.u} ${f.unit}   (f0: Q and ESR are at this frequency)`,
    `   ring         ${formatSi(r.ring_amplitude_v, "V", 3)} initial, ${r.edges_used} edges used` +
      (r.edges_rejected > 0 ? `, ${r.edges_rejected} rejected` : ""),
  ];
  const s = r.settings;
  const tankNote = s.calibration ? (s.calibration.tank_calibrated ? " calibrated" : " nominal") : "";
  const parts = [`tank ${formatSi(s.tank_c_f, "F", 4)}${tankNote}`];
  if (s.drive) parts.unshift(`drive ${formatSi(s.drive.series_ohm, "Ω", 3)}`);
  if (s.range) parts.push(`charge ${s.range.charge_us} µs`);
  lines.push(`   setting      ${parts.join(", ")}`);
  if (r.test_frequency) lines.push(`   test freq.   ${r.test_frequency.note}`);
  if (r.suspect) lines.push(`   ? SUSPECT ${r.suspect.code}: ${r.suspect.message}`);
  for (const w of r.warnings) lines.push(`   ! ${w.code}: ${w.message}`);
  return lines.join("\n");
}

/** The uncertainty budget of an inductance value (measure --budget): one line per contribution. */
export function renderBudget(b: UncertaintyBudget): string {
  const pct = (x: number) => `${(x * 100).toFixed(4)} %`;
  const lines = [`   budget       ${b.measurand === "corrected" ? "corrected for self-capacitance" : "apparent inductance"}, standard relative contributions`];
  for (const l of b.lines) lines.push(`     ${l.group.padEnd(17)} ${pct(l.rel_u).padStart(10)}   ${l.note}`);
  lines.push(`     ${"combined".padEnd(17)} ${pct(b.combined_rel_u).padStart(10)}   U = ${formatSi(b.expanded_h, "H", 3)} (k = ${b.coverage_factor}, JCGM 100:2008)`);
  return lines.join("\n");
}

/** Two-tank result (measure --self-cap): L corrected, Cs, self-resonance, and how touchy Cs is. */
export function renderSelfCapacitance(sc: SelfCapacitanceReading): string {
  const r = sc.result;
  const L = formatWithUncertainty(r.inductance_h, 2 * r.u.inductance_h, "H");
  const C = formatWithUncertainty(r.self_capacitance_f, 2 * r.u.self_capacitance_f, "F");
  // A self-capacitance below zero is no physical value: the tanks' own error outweighs it.
  const cs = r.self_capacitance_f > 0
    ? `${C.value} ${C.unit}  ± ${C.u} ${C.unit}${2 * r.u.self_capacitance_f >= r.self_capacitance_f ? "   (consistent with zero)" : ""}`
    : `not determined (the two tanks give ${C.value} ${C.unit} ± ${C.u} ${C.unit}, not above zero: calibrate the tanks, henrytick calibrate reference, then measure again)`;
  const lines = [
    `   L corrected  ${L.value} ${L.unit}  ± ${L.u} ${L.unit}   (k = 2; tanks ${sc.first.settings.tank} and ${sc.second.settings.tank})`,
    `   self-cap.    ${cs}`,
  ];
  if (r.srf_hz !== null && r.u.srf_hz !== null) {
    const s = formatWithUncertainty(r.srf_hz, 2 * r.u.srf_hz, "Hz");
    lines.push(`   self-res.    ${s.value} ${s.unit}  ± ${s.u} ${s.unit}`);
  } else {
    lines.push("   self-res.    not estimated (Cs not above zero)");
  }
  lines.push(`   Cs moves by  ${formatSi(r.cs_per_percent.small_f, "F", 3)} per +1 % of the small tank, ${formatSi(r.cs_per_percent.large_f, "F", 3)} per +1 % of the large one`);
  return lines.join("\n");
}
