// henrytick measure: one reading of the part on the clips.

import { writeCaptureFile } from "../capture/capture-file.ts";
import { measurePart } from "../measure/measure-part.ts";
import { buildResult } from "../measure/result.ts";
import { openTester } from "../open-tester.ts";
import { intOption, numberOption, parse, testerTarget } from "./args.ts";
import { CliUsageError } from "./errors.ts";
import { renderReading } from "./render.ts";
import { runWatch, WATCH_OPTIONS } from "./measure-watch.ts";

export async function runMeasure(args: string[]): Promise<number> {
  const { values, positionals } = parse(args, {
    sim: { type: "boolean" },
    port: { type: "string" },
    json: { type: "boolean" },
    save: { type: "string" },
    label: { type: "string" },
    drive: { type: "string" },
    tank: { type: "string" },
    "charge-us": { type: "string" },
    "max-peak-v": { type: "string" },
    seed: { type: "string" },
    ...WATCH_OPTIONS,
  });
  const target = testerTarget(values, positionals);
  const drive = intOption(values.drive, "drive", 0, 63);
  const tank = intOption(values.tank, "tank", 0, 63);
  if ((drive === undefined) !== (tank === undefined)) throw new CliUsageError("--drive and --tank go together");
  const charge_us = intOption(values["charge-us"], "charge-us", 1, 10_000_000);
  if (charge_us !== undefined && drive === undefined) throw new CliUsageError("--charge-us needs --drive and --tank");
  const max_peak_v = numberOption(values["max-peak-v"], "max-peak-v", 0.1, 1000);
  const progress = (m: string) => {
    if (!values.json) process.stderr.write(`   ${m}\n`);
  };

  const tester = await openTester(target);
  try {
    const label = values.label ?? tester.scenario?.name;
    progress(`tester ${tester.client.identity.device_id} (firmware ${tester.client.identity.firmware_version}) via ${tester.client.transport.description}`);
    if (values.watch) return await runWatch(tester, values, { drive, tank, charge_us, max_peak_v, label }, label ?? "part on the clips");
    const reading = await measurePart(tester.client, { drive, tank, charge_us, max_peak_v, label, onProgress: progress });
    if (values.save) {
      writeCaptureFile(values.save, reading.capture);
      progress(`capture saved to ${values.save}`);
    }
    const result = buildResult(reading.analysis, reading.capture);
    if (values.json) process.stdout.write(JSON.stringify(result, null, 2) + "\n");
    else process.stdout.write(renderReading(result, label ?? "part on the clips") + "\n");
    return 0;
  } finally {
    await tester.close();
  }
}
