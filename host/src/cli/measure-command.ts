// henrytick measure: one reading of the part on the clips.

import { fstatSync, statSync } from "node:fs";
import { dirname, join, resolve } from "node:path";
import { writeCaptureFile } from "../capture/capture-file.ts";
import { MeasureError, measurePart, PartFaultError } from "../measure/measure-part.ts";
import { reportReading, selfCapacitanceJson } from "../measure/reading-report.ts";
import { openTester } from "../open-tester.ts";
import { intOption, numberOption, parse, refuseTogether, requireWith, testerTarget } from "./args.ts";
import { CliUsageError, cliWording, reportError } from "./errors.ts";
import { renderReading } from "./render.ts";
import { csvHeader, csvRow } from "./result-csv.ts";
import { runWatch, WATCH_OPTIONS } from "./measure-watch.ts";
import { deviceCalibration, storeFor } from "../calibration/index.ts";
import { renderBudget, renderSelfCapacitance } from "./render.ts";
import { otherWindingPeakV, resolvePeakLimit, volts } from "../ranging/safety.ts";
import { PulseCaution, windingRatioOption } from "./caution.ts";
import { FREQ_OPTIONS, testFrequencyOption } from "./test-frequency.ts";

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
    "hazardous-ok": { type: "boolean" },
    "winding-ratio": { type: "string" },
    auto: { type: "boolean" },
    seed: { type: "string" },
    uncalibrated: { type: "boolean" },
    "config-dir": { type: "string" },
    "self-cap": { type: "boolean" },
    budget: { type: "boolean" },
    "keep-suspect": { type: "boolean" },
    ...WATCH_OPTIONS,
    ...FREQ_OPTIONS,
  });
  refuseTogether(values, ["json", "csv"]);
  requireWith(values, { big: "watch", count: "watch", "interval-ms": "watch", series: "watch" });
  for (const o of ["save", "self-cap", "budget"] as const) if (values[o] !== undefined && values.watch) throw new CliUsageError(`--${o} gives one reading; leave out --watch or --${o}`);
  const target = testerTarget(values, positionals);
  if (values.save !== undefined) checkSavePath(values.save);
  const drive = intOption(values.drive, "drive", 0, 63);
  const tank = intOption(values.tank, "tank", 0, 63);
  if ((drive === undefined) !== (tank === undefined)) throw new CliUsageError("--drive and --tank go together");
  if (values.auto && drive !== undefined) throw new CliUsageError("--auto (the default) chooses the setting itself; leave out --drive and --tank, or --auto");
  const hazardous_ok = values["hazardous-ok"] ?? false;
  const charge_us = intOption(values["charge-us"], "charge-us", 1, 10_000_000);
  if (charge_us !== undefined && drive === undefined) throw new CliUsageError("--charge-us needs --drive and --tank");
  const max_peak_v = numberOption(values["max-peak-v"], "max-peak-v", 0.1, 1000);
  const other_winding_ratio = windingRatioOption(values["winding-ratio"]);
  const test_frequency_hz = testFrequencyOption(values);
  const keep_suspect = values["keep-suspect"] ?? false;
  if (keep_suspect && values.watch) throw new CliUsageError("--keep-suspect gives one reading for inspection; leave out --watch");
  const progress = (m: string) => {
    if (!values.json && !values.csv) process.stderr.write(`   ${m}\n`);
  };

  const tester = await openTester(target);
  try {
    const label = values.label ?? tester.scenario?.name;
    progress(`tester ${tester.client.identity.device_id} (firmware ${tester.client.identity.firmware_version}) via ${tester.client.transport.description}`);
    const limit = resolvePeakLimit(max_peak_v, tester.client.profile.clamp_v, hazardous_ok, { other_winding_ratio });
    if (!limit.ok) throw new CliUsageError(limit.message);
    // The tester says how many drives and tanks it has: a setting it lacks is a usage error, before any pulse.
    const { drives, tanks } = tester.client.profile;
    if (drive !== undefined && drive >= drives.length) throw new CliUsageError(`--drive ${drive}: this tester has drives 0 to ${drives.length - 1} ("henrytick profile" lists them)`);
    if (tank !== undefined && tank >= tanks.length) throw new CliUsageError(`--tank ${tank}: this tester has tanks 0 to ${tanks.length - 1} ("henrytick profile" lists them)`);
    const caution = new PulseCaution({ describe: [values.label, tester.scenario?.name, tester.scenario?.story], limit, quiet: values.json === true || values.csv === true, repeated: values.watch === true });
    caution.start();
    const onBeforePulse = caution.beforePulse;
    // The tester's calibration profile applies to every reading unless --uncalibrated says not.
    const cal = values.uncalibrated ? null : deviceCalibration(tester.client, storeFor({ configDir: values["config-dir"], simulated: tester.sim !== undefined }));
    const calibration = cal?.applied;
    if (cal?.applied) progress(`calibration ${cal.path}`);
    if (values.watch) return await runWatch(tester, values, { drive, tank, charge_us, max_peak_v, hazardous_ok, other_winding_ratio, test_frequency_hz, onBeforePulse, label, calibration }, label ?? "part on the clips");
    let reading;
    try {
      reading = await measurePart(tester.client, { drive, tank, charge_us, max_peak_v, hazardous_ok, other_winding_ratio, test_frequency_hz, onBeforePulse, label, calibration, keep_suspect, onProgress: progress });
    } catch (e) {
      if (!(e instanceof MeasureError)) throw e;
      return refused(e, values.json === true);
    }
    if (other_winding_ratio !== undefined && other_winding_ratio > 1) {
      progress(`the other winding saw about ${volts(otherWindingPeakV(reading.analysis.amplitude_v, other_winding_ratio))} (${other_winding_ratio}× the ${volts(reading.analysis.amplitude_v)} ring)`);
    }
    if (reading.suspect) progress(`suspect reading kept on request (${reading.suspect.code}): not a verified result`);
    // The reading is printed first: if the capture cannot be written after all, it is not lost.
    const save = (): number => {
      if (!values.save) return 0;
      try {
        writeCaptureFile(values.save, reading.capture);
      } catch (e) {
        process.stderr.write("   the reading above was taken, but its capture could not be saved:\n");
        return reportError(e);
      }
      progress(`capture saved to ${values.save}`);
      return 0;
    };
    // The budget and the two-tank correction are the library's (measure/reading-report.ts).
    const report = await reportReading(tester.client, reading, { profile: cal?.profile ?? null, self_capacitance: values["self-cap"], calibration, label, onProgress: progress });
    const { result, budget } = report;
    const selfCap = report.self_capacitance ?? null;
    const selfCapProblem = report.self_capacitance_error ?? null;
    if (values.csv) {
      // Appending to a log (>> log.csv): the header only when the file is new or empty; a time column first.
      process.stdout.write((stdoutHasContent() ? "" : csvHeader(["time"])) + csvRow(result, [new Date().toISOString()]));
      return save();
    }
    if (values.json) {
      // Extra keys only on request: a plain --json result stays what "analyze" prints for the capture
      // (settings.calibration.source already names the profile).
      const extra = {
        ...(values.budget || values["self-cap"] ? { budget } : {}),
        ...(selfCap ? { self_capacitance: selfCapacitanceJson(selfCap) } : {}),
        ...(selfCapProblem ? { self_capacitance_error: selfCapProblem } : {}),
      };
      process.stdout.write(JSON.stringify({ ...result, ...extra }, null, 2) + "\n");
      return save();
    }
    const blocks = [renderReading(result, label ?? "part on the clips")];
    if (selfCap) blocks.push(renderSelfCapacitance(selfCap));
    if (selfCapProblem) blocks.push(`   ! ${selfCapProblem.code}: ${cliWording(selfCapProblem.message)}`);
    if (values.budget) blocks.push(renderBudget(budget));
    process.stdout.write(blocks.join("\n") + "\n");
    return save();
  } finally {
    await tester.close();
  }
}

/**
 * No reading: the diagnosis and advice on stderr (as for every refusal), and with --json an error
 * object { code, message, part_fault, suspect_available } on stdout.
 */
function refused(e: MeasureError, json: boolean): number {
  reportError(e);
  const kept = e instanceof PartFaultError && e.suspect !== undefined;
  if (kept) process.stderr.write("   no reading given; --keep-suspect returns it anyway, marked suspect\n");
  if (json) process.stdout.write(JSON.stringify({ error: { code: e.code, message: cliWording(e.message), ...(e instanceof PartFaultError ? { part_fault: true, suspect_available: kept } : {}) } }, null, 2) + "\n");
  return 1;
}

/** --save PATH is checked before any pulse: not a folder, and its folder exists. */
function checkSavePath(path: string): void {
  let st;
  try {
    st = statSync(path);
  } catch {
    st = undefined;
  }
  if (st?.isDirectory()) throw new CliUsageError(`--save ${path} is a folder; give a file name in it, e.g. --save ${join(path, "capture.json")}`);
  const dir = dirname(resolve(path));
  let d;
  try {
    d = statSync(dir);
  } catch {
    d = undefined;
  }
  if (!d?.isDirectory()) throw new CliUsageError(`--save ${path}: the folder ${dir} does not exist; create it first (mkdir -p ${dir}) or choose another place`);
}

/** True when stdout is a regular file that already holds something (`>> log.csv` on an existing log). */
function stdoutHasContent(): boolean {
  try {
    const st = fstatSync(1);
    return st.isFile() && st.size > 0;
  } catch {
    return false;
  }
}
