// henrytick advise: one gentle probe (or a full reading), then every setting of the tester
// predicted and ranked, each with its reason. Nothing stronger than the probe is pulsed.

import { probePart } from "../measure/auto-range.ts";
import { openTester } from "../open-tester.ts";
import { adviseSettings } from "../ranging/advice.ts";
import { resolvePeakLimit, volts } from "../ranging/safety.ts";
import { PulseCaution, windingRatioOption } from "./caution.ts";
import { formatSi } from "../format/si.ts";
import { numberOption, parse, testerTarget } from "./args.ts";
import { CliUsageError, cliWording } from "./errors.ts";
import { FREQ_OPTIONS, testFrequencyOption } from "./test-frequency.ts";
import { describeFrequencyChoice, orderForFrequency } from "../ranging/choose-setting.ts";

export async function runAdvise(args: string[]): Promise<number> {
  const { values, positionals } = parse(args, {
    sim: { type: "boolean" }, port: { type: "string" }, json: { type: "boolean" }, seed: { type: "string" },
    "max-peak-v": { type: "string" }, "hazardous-ok": { type: "boolean" }, "winding-ratio": { type: "string" }, ...FREQ_OPTIONS,
  });
  const other_winding_ratio = windingRatioOption(values["winding-ratio"]);
  const asked = testFrequencyOption(values);
  const tester = await openTester(testerTarget(values, positionals));
  try {
    const profile = tester.client.profile;
    const limit = resolvePeakLimit(numberOption(values["max-peak-v"], "max-peak-v", 0.1, 1000), profile.clamp_v, values["hazardous-ok"] ?? false, { other_winding_ratio });
    if (!limit.ok) throw new CliUsageError(limit.message);
    new PulseCaution({ describe: [tester.scenario?.name, tester.scenario?.story], limit, quiet: values.json === true }).start();
    const progress = (m: string) => {
      if (!values.json) process.stderr.write(`   ${m}\n`);
    };
    const est = await probePart(tester.client, progress, limit.limit_v);
    const ranked = adviseSettings(profile, est, {
      max_peak_v: limit.limit_v, min_ticks_per_period: 40,
      ...(limit.limit_v < limit.winding_limit_v ? { why: `${volts(limit.winding_limit_v)} / ${limit.other_winding_ratio} for the other winding` } : {}),
    });
    // With --freq: the order ranging would try them in, nearest tank first.
    const advice = asked === undefined ? ranked : orderForFrequency(ranked, asked);
    const first = advice.find((a) => a.refused === "");
    const choice = asked !== undefined && first ? describeFrequencyChoice(profile, advice, asked, first.tank, first.f_hz, { predicted: true }) : undefined;
    if (values.json) {
      const { ok: _ok, ...limitJson } = limit;
      process.stdout.write(JSON.stringify({ estimate: est, limit_v: limit.limit_v, limit: limitJson, ...(choice ? { test_frequency: choice } : {}), advice }, null, 2) + "\n");
      return 0;
    }
    const lines = [`── advice for a part of about ${formatSi(est.l_h, "H", 3)} (from a probe; ${limit.message})`];
    lines.push(...limit.basis.map((b) => `   limit  ${cliWording(b)}`));
    if (choice) lines.push(`   freq   ${choice.note}; the settings in the order ranging would try them`);
    const at = (a: { f_hz: number }) => (asked === undefined ? "" : ` Rings at about ${formatSi(a.f_hz, "Hz", 3)}.`);
    advice.forEach((a, i) => lines.push(`   ${a.refused ? " -" : String(i + 1).padStart(2)}  ${a.reason}${at(a)}`));
    process.stdout.write(lines.join("\n") + "\n");
    return 0;
  } finally {
    await tester.close();
  }
}
