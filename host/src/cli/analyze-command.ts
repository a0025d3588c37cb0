// henrytick analyze FILE...: the same analysis and part-fault judgement on saved captures (a
// capture kept as suspect reads as suspect again).

import { readCaptureFile } from "../capture/capture-file.ts";
import { judgeCapture } from "../measure/measure-part.ts";
import { buildResult } from "../measure/result.ts";
import { parse } from "./args.ts";
import { CliUsageError, reportError } from "./errors.ts";
import { renderReading } from "./render.ts";
import { csvHeader, csvRow } from "./result-csv.ts";

/** Twice the reference board's 8 192-edge buffer. */
const LARGE_CAPTURE_EDGES = 16_384;

export async function runAnalyze(args: string[]): Promise<number> {
  const { values, positionals } = parse(args, { json: { type: "boolean" }, csv: { type: "boolean" } });
  if (positionals.length === 0) throw new CliUsageError("analyze needs at least one capture FILE");
  let status = 0;
  const results = [];
  for (const file of positionals) {
    try {
      const capture = readCaptureFile(file);
      // A capture far beyond one board buffer takes a second or so: say so on stderr.
      if (capture.edges.length > LARGE_CAPTURE_EDGES) process.stderr.write(`analysing ${file}: ${capture.edges.length} edges …\n`);
      const reading = judgeCapture(capture, undefined, { keep_suspect: true });
      const result = buildResult(reading.analysis, reading.capture, reading.suspect);
      if (values.csv) process.stdout.write((results.length === 0 ? csvHeader(["file"]) : "") + csvRow(result, [file]));
      if (values.json || values.csv) results.push(positionals.length > 1 ? { file, ...result } : result);
      else process.stdout.write(renderReading(result, result.label ?? file) + "\n");
    } catch (e) {
      status = Math.max(status, reportError(e));
    }
  }
  if (values.json && !values.csv && results.length > 0) {
    process.stdout.write(JSON.stringify(results.length === 1 && positionals.length === 1 ? results[0] : results, null, 2) + "\n");
  }
  return status;
}
