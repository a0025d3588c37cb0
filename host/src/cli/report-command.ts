// henrytick report CAPTURE...: one self-contained HTML page with plots for saved captures.

import { formatMeasured } from "../values/format-value.ts";
import { writeReport } from "../report/write-report.ts";
import { parse } from "./args.ts";
import { CliUsageError } from "./errors.ts";
import { csvField } from "../format/csv.ts";

export const REPORT_HELP = `henrytick report — HTML report with plots for saved captures

Usage:
  henrytick report CAPTURE... [--out FILE] [--json | --csv]

  Writes one self-contained HTML file (inline SVG, no scripts, nothing fetched) with, for each
  capture: the key figures, the edges on the reconstructed ring with its envelope, the fit
  residuals over time, the period against amplitude and the uncertainty budget.

Options:
  --out FILE   where to write the page (default henrytick-report.html)
  --json       print what was written (file, size, each capture's result) as JSON
  --csv        print one row per capture: file, inductance_h, inductance_u_h, q, esr_ohm

Examples:
  henrytick measure --sim --save choke.json && henrytick report choke.json
  henrytick report bench/*.json --out bench/report.html
`;

export async function runReportCommand(args: string[]): Promise<number> {
  const { values, positionals } = parse(args, {
    out: { type: "string", short: "o" }, json: { type: "boolean" }, csv: { type: "boolean" }, help: { type: "boolean", short: "h" },
  });
  if (values.help) {
    process.stdout.write(REPORT_HELP);
    return 0;
  }
  if (positionals.length === 0) throw new CliUsageError("report needs at least one capture FILE (write one with: henrytick measure --sim --save FILE)");
  if (values.json && values.csv) throw new CliUsageError("use either --json or --csv, not both");
  const out = values.out ?? "henrytick-report.html";
  process.stderr.write(`   analysing ${positionals.length} capture${positionals.length === 1 ? "" : "s"} …\n`);
  const { bytes, entries } = writeReport(positionals, out);
  if (values.json) {
    process.stdout.write(JSON.stringify({ report: out, bytes, captures: entries.map((e) => ({ file: e.source, ...e.data.result })) }, null, 2) + "\n");
  } else if (values.csv) {
    process.stdout.write("file,inductance_h,inductance_u_h,q,esr_ohm\n");
    for (const e of entries) {
      const r = e.data.result;
      process.stdout.write([e.source, r.inductance_h, r.inductance_u_h, r.q, r.esr_ohm].map(csvField).join(",") + "\n");
    }
  } else {
    for (const e of entries) process.stdout.write(`   ${e.source}: ${formatMeasured(e.data.result.inductance_h, e.data.result.inductance_u_h, "H")}\n`);
    process.stdout.write(`── report written to ${out} (${(bytes / 1024).toFixed(0)} KiB)\n`);
  }
  return 0;
}
