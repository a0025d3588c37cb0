// henrytick advise: one gentle probe (or a full reading), then every setting of the tester
// predicted and ranked, each with its reason. Nothing stronger than the probe is pulsed.

import { probePart } from "../measure/auto-range.ts";
import { openTester } from "../open-tester.ts";
import { adviseSettings } from "../ranging/advice.ts";
import { resolvePeakLimit } from "../ranging/safety.ts";
import { formatSi } from "../format/si.ts";
import { numberOption, parse, testerTarget } from "./args.ts";
import { CliUsageError } from "./errors.ts";

export async function runAdvise(args: string[]): Promise<number> {
  const { values, positionals } = parse(args, {
    sim: { type: "boolean" }, port: { type: "string" }, json: { type: "boolean" }, seed: { type: "string" },
    "max-peak-v": { type: "string" }, "hazardous-ok": { type: "boolean" },
  });
  const tester = await openTester(testerTarget(values, positionals));
  try {
    const profile = tester.client.profile;
    const limit = resolvePeakLimit(numberOption(values["max-peak-v"], "max-peak-v", 0.1, 1000), profile.clamp_v, values["hazardous-ok"] ?? false);
    if (!limit.ok) throw new CliUsageError(limit.message);
    const progress = (m: string) => {
      if (!values.json) process.stderr.write(`   ${m}\n`);
    };
    const est = await probePart(tester.client, progress, limit.limit_v);
    const advice = adviseSettings(profile, est, { max_peak_v: limit.limit_v, min_ticks_per_period: 40 });
    if (values.json) {
      process.stdout.write(JSON.stringify({ estimate: est, limit_v: limit.limit_v, advice }, null, 2) + "\n");
      return 0;
    }
    const lines = [`── advice for a part of about ${formatSi(est.l_h, "H", 3)} (from a probe; ${limit.message})`];
    advice.forEach((a, i) => lines.push(`   ${a.refused ? " -" : String(i + 1).padStart(2)}  ${a.reason}`));
    process.stdout.write(lines.join("\n") + "\n");
    return 0;
  } finally {
    await tester.close();
  }
}
