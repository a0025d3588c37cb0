// henrytick profile / scenarios: what the tester offers, which demo parts exist.

import { formatSi } from "../format/si.ts";
import { openTester } from "../open-tester.ts";
import { listScenarios, loadScenario } from "../sim/scenario.ts";
import { parse, testerTarget } from "./args.ts";
import { CliUsageError } from "./errors.ts";
import { formatValue } from "../values/format-value.ts";

export async function runProfile(args: string[]): Promise<number> {
  const { values, positionals } = parse(args, {
    sim: { type: "boolean" }, port: { type: "string" }, json: { type: "boolean" }, seed: { type: "string" },
  });
  const tester = await openTester(testerTarget(values, positionals));
  try {
    const { identity, profile } = tester.client;
    if (values.json) {
      process.stdout.write(JSON.stringify({ identity, profile }, null, 2) + "\n");
      return 0;
    }
    const out = [
      `── tester ${identity.device_id}: ${identity.product} firmware ${identity.firmware_version}, protocol v${identity.protocol_version}`,
      `   timer        ${formatSi(profile.tick_hz, "Hz", 4)}, buffer ${profile.buffer_edges} edges`,
      `   thresholds   rising ${formatSi(profile.thresholds_v[0], "V", 3)}, falling ${formatSi(profile.thresholds_v[1], "V", 3)}`,
      ...(profile.comparator
        ? [`   comparator   noise ${formatSi(profile.comparator.noise_v, "V", 2)} rms in ${formatSi(profile.comparator.noise_bw_hz, "Hz", 2)}, delays ${formatSi(profile.comparator.delay_rise_s, "s", 3)} rising / ` +
          `${formatSi(profile.comparator.delay_fall_s, "s", 3)} falling (skew ± ${formatSi(profile.comparator.skew_u_s, "s", 2)}), overdrive ${formatSi(profile.comparator.overdrive_v_s, "V·s", 2)}`]
        : []),
      `   supply       ${formatSi(profile.supply_v, "V", 3)}, clamp ${formatSi(profile.clamp_v, "V", 3)}`,
      ...profile.drives.map((d) => `   drive ${d.index}      ${formatSi(d.ohm, "Ω", 3)}, ${formatSi(d.power_rating_w, "W", 2)}, charge ≤ ${d.max_charge_us} µs` +
        (d.thermal_time_constant_s !== undefined ? `, thermal τ ${formatSi(d.thermal_time_constant_s, "s", 2)}, rest after the longest ${d.rest_after_max_ms} ms` : "")),
      ...profile.tanks.map((t) => `   tank ${t.index}       ${formatSi(t.nominal_f, "F", 3)} nominal`),
      profile.drives.every((d) => d.thermal_time_constant_s !== undefined)
        ? "   rest         from each drive resistor's heat budget: short pulses owe none"
        : `   rest         ≥ ${profile.min_rest_ms} ms and ≥ ${profile.rest_per_charge}× the charge time between pulses`,
    ];
    process.stdout.write(out.join("\n") + "\n");
    return 0;
  } finally {
    await tester.close();
  }
}

export function runScenarios(args: string[]): number {
  const { values, positionals } = parse(args, { json: { type: "boolean" } });
  if (positionals.length > 0) throw new CliUsageError(`unexpected argument "${positionals[0]}"`);
  const all = listScenarios().map((name) => ({ name, scenario: loadScenario(name) }));
  if (values.json) {
    process.stdout.write(JSON.stringify(all.map(({ name, scenario }) => ({ name, inductance_h: scenario.part.inductance_h, story: scenario.story })), null, 2) + "\n");
    return 0;
  }
  // Columns as wide as their longest entry, so every story starts in the same place.
  const rows = all.map(({ name, scenario }) => [name, formatValue(scenario.part.inductance_h, "H", 3), scenario.story]);
  const w0 = Math.max(...rows.map((r) => r[0].length));
  const w1 = Math.max(...rows.map((r) => r[1].length));
  for (const [name, l, story] of rows) process.stdout.write(`${name.padEnd(w0)}  ${l.padEnd(w1)}  ${story}\n`);
  return 0;
}
