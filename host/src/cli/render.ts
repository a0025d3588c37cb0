// Human-readable output for the terminal. Layout: one block per reading, value first.

import type { ResultJson } from "../measure/result.ts";
import { formatSi, formatWithUncertainty } from "../format/si.ts";

export function renderReading(r: ResultJson, title: string): string {
  const L = formatWithUncertainty(r.inductance_h, r.inductance_u_h, "H");
  const Q = formatWithUncertainty(r.q, r.q_u, "");
  const R = formatWithUncertainty(r.esr_ohm, r.esr_u_ohm, "Ω");
  const f = formatWithUncertainty(r.f0_hz, r.f0_u_hz, "Hz");
  const lines = [
    `── ${title}`,
    `   inductance   ${L.value} ${L.unit}  ± ${L.u} ${L.unit}   (k = 2)`,
    `   Q            ${Q.value}  ± ${Q.u}`,
    `   ESR          ${R.value} ${R.unit}  ± ${R.u} ${R.unit}   at ${f.value} ${f.unit}`,
    `   ring         ${formatSi(r.ring_amplitude_v, "V", 3)} initial, ${r.edges_used} edges used` +
      (r.edges_rejected > 0 ? `, ${r.edges_rejected} rejected` : ""),
  ];
  const s = r.settings;
  const tankNote = s.calibration ? (s.calibration.tank_calibrated ? " calibrated" : " nominal") : "";
  const parts = [`tank ${formatSi(s.tank_c_f, "F", 4)}${tankNote}`];
  if (s.drive) parts.unshift(`drive ${formatSi(s.drive.series_ohm, "Ω", 3)}`);
  if (s.range) parts.push(`charge ${s.range.charge_us} µs`);
  lines.push(`   setting      ${parts.join(", ")}`);
  for (const w of r.warnings) lines.push(`   ! ${w.code}: ${w.message}`);
  return lines.join("\n");
}
