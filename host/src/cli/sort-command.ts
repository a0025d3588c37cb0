// henrytick sort: classify a batch of parts against a tolerance, one part at a time, with a
// running tally, statistics at the end and an append-only log.

import { mkdirSync } from "node:fs";
import { dirname, resolve } from "node:path";
import { deviceCalibration, storeFor } from "../calibration/index.ts";
import { openTester } from "../open-tester.ts";
import { formatSi, formatWithUncertainty } from "../format/si.ts";
import { formatMeasured, formatValue, formatValueOnly } from "../values/format-value.ts";
import { parseSeriesName } from "../values/e-series.ts";
import { toleranceLimits } from "../values/tolerance.ts";
import { makeBins } from "../workflows/bins.ts";
import { drawTray, SimTray } from "../workflows/sim-tray.ts";
import { csvRow, CSV_COLUMNS, SortLog } from "../workflows/sort-log.ts";
import { runSort, type SortEvent } from "../workflows/sort-runner.ts";
import { SortSession, type PartRecord } from "../workflows/sort-session.ts";
import { makeStyle, stdinLines, type Style } from "../workflows/terminal.ts";
import { intOption, numberOption, optionValue, parse, testerTarget, toleranceOnce, valueOption } from "./args.ts";
import { MEASURABLE_RANGE } from "../values/range.ts";
import { CliUsageError, cliWording } from "./errors.ts";
import { onCtrlC } from "./interrupt.ts";
import { resolvePeakLimit } from "../ranging/safety.ts";
import { PulseCaution, windingRatioOption } from "./caution.ts";
import { FREQ_OPTIONS, testFrequencyOption } from "./test-frequency.ts";

export const SORT_HELP = `henrytick sort — sort parts against a tolerance

Usage:
  henrytick sort (--sim | --port PATH) --nominal VALUE --tol TOL [options]

  Put parts on the clips one after another. A part is recorded once it reads steadily, then
  the next is awaited until the clips read open (or, with --trigger enter, one part per Enter;
  q or end of input finishes). Ctrl-C finishes and prints the summary.

Options:
  --nominal VALUE   nominal inductance: 10u, 4u7, 4.7 µH, 4.7e-6, or with a tolerance letter (4u7J)
  --tol TOL         5%, ±2 %, +10%/-5%, an IEC 60062 letter (B C D F G J K M) or an absolute 0.5u
  --lot TEXT        lot name written to every log record
  --bins LIST       extra bins cut at these values, e.g. 9.8u,10.2u
  --series E12      also show each part's nearest E6…E192 value
  --log BASE        append records to BASE.csv and BASE.jsonl (default henrytick-sort)
  --trigger MODE    ring (default: parts detected from the ring) or enter (stdin lines)
  --count N         stop after N parts (simulated tray: N parts, default 12)
  --settle N        agreeing readings before a part is recorded (default 2)
  --poll-ms N       pause between readings while watching the clips (default 200, simulated 0)
  --sim-tray LIST   simulated tester: the tray's inductances, e.g. 10u,10.6u,9.4u
  --max-peak-v V    lower the ring-peak limit (default 30 V; 28.8 V on a 36 V clamp)
  --freq F          working frequency (10k, 100 kHz): ranging takes the tank whose ring is
                    nearest it; each part's readings stay on the setting of its first
  --winding-ratio N transformers: the other winding has N times the pulsed turns (19 or 230:12);
                    every pulse is kept at the limit / N
  --uncalibrated    ignore the tester's calibration profile (nominal tank values)
  --config-dir DIR  where calibration profiles live (default $XDG_CONFIG_HOME/henrytick)
  --seed N          noise and tray seed for the simulated tester
  --json            print the records and the summary as JSON at the end
  --csv             print the records as CSV rows (same columns as the log)

Decisions follow ISO 14253-1: conforming only when value ± U lies inside the limits,
nonconforming only when it lies wholly outside, inconclusive in between.

Examples:
  henrytick sort --sim --nominal 10u --tol 5%
  henrytick sort --sim --nominal 4u7J --sim-tray 4.7u,5.2u,4.45u --log bench/lot7 --lot 7
  henrytick sort --sim --nominal 330u --tol 10% --sim-tray 330u,318u,345u --freq 10k
  henrytick sort --port /dev/ttyACM0 --nominal 330u --tol K --bins 300u,330u,360u --series E12
`;

export async function runSortCommand(args: string[]): Promise<number> {
  const { values, positionals } = parse(args, {
    sim: { type: "boolean" }, port: { type: "string" }, seed: { type: "string" }, help: { type: "boolean", short: "h" },
    nominal: { type: "string" }, tol: { type: "string" }, lot: { type: "string" }, bins: { type: "string" },
    series: { type: "string" }, log: { type: "string" }, trigger: { type: "string" }, count: { type: "string" },
    settle: { type: "string" }, "poll-ms": { type: "string" }, "sim-tray": { type: "string" },
    "max-peak-v": { type: "string" }, "winding-ratio": { type: "string" }, ...FREQ_OPTIONS, uncalibrated: { type: "boolean" }, "config-dir": { type: "string" }, json: { type: "boolean" }, csv: { type: "boolean" },
  });
  if (values.help) {
    process.stdout.write(SORT_HELP);
    return 0;
  }
  if (positionals.length > 0) throw new CliUsageError(`unexpected argument "${positionals[0]}"`);
  if (values.json && values.csv) throw new CliUsageError("use either --json or --csv, not both");
  const target = testerTarget(values, []);
  const spec = sortSpec(values);
  const trigger = values.trigger ?? "ring";
  if (trigger !== "ring" && trigger !== "enter") throw new CliUsageError(`--trigger must be ring or enter, got "${trigger}"`);
  const count = intOption(values.count, "count", 1, 1_000_000);
  const settle = intOption(values.settle, "settle", 1, 10);
  const pollMs = intOption(values["poll-ms"], "poll-ms", 0, 60_000) ?? (values.sim ? 0 : 200);
  const max_peak_v = numberOption(values["max-peak-v"], "max-peak-v", 0.1, 1000);
  const other_winding_ratio = windingRatioOption(values["winding-ratio"]);
  const test_frequency_hz = testFrequencyOption(values);
  if (values["sim-tray"] && !values.sim) throw new CliUsageError("--sim-tray needs --sim");
  const session = new SortSession(spec);

  const style = makeStyle();
  const quiet = values.json || values.csv;
  const note = (m: string) => process.stderr.write(`   ${m}\n`);
  const base = values.log ?? "henrytick-sort";
  // --log bench/lot7 in a fresh folder: the folders are made.
  mkdirSync(dirname(resolve(base)), { recursive: true });
  const log = SortLog.open({ csv: `${base}.csv`, jsonl: `${base}.jsonl` });
  const tester = await openTester(target);
  const stop = new AbortController();
  // First Ctrl-C: finish after the reading in progress (the summary still prints); a second press: quit now.
  const ctrlC = onCtrlC(() => stop.abort());
  try {
    // The tester's calibration profile applies as it does for "measure" (smaller U, fewer unsure parts).
    const cal = values.uncalibrated ? null : deviceCalibration(tester.client, storeFor({ configDir: values["config-dir"], simulated: tester.sim !== undefined }));
    note(cal?.applied ? `calibration ${cal.path}` : "uncalibrated: nominal tank values (henrytick calibrate … makes U smaller)");
    let tray: SimTray | undefined;
    if (tester.sim) {
      const trayValues = values["sim-tray"]
        ? values["sim-tray"].split(",").map((t) => valueOption(t, "sim-tray", "H")!.value)
        : drawTray(session.limits, count ?? 12, ("seed" in target ? target.seed : undefined) ?? 7);
      tray = new SimTray(tester.sim, trayValues);
    }
    note(`sorting against ${formatValue(spec.nominal_h, "H", 4)} ${spec.tolerance.text}: limits ${formatValue(session.limits.lower, "H", 4)} … ${formatValue(session.limits.upper, "H", 4)}`);
    note(trigger === "ring" ? "put a part on the clips; take it off when it has been recorded (Ctrl-C finishes)" : "press Enter to measure the part on the clips, q to finish");
    const limit = resolvePeakLimit(max_peak_v, tester.client.profile.clamp_v, false, { other_winding_ratio });
    if (!limit.ok) throw new CliUsageError(limit.message);
    const caution = new PulseCaution({ describe: [spec.lot, tester.scenario?.name, tester.scenario?.story], limit, quiet: false, repeated: true });
    caution.start();
    if (values.csv) process.stdout.write(CSV_COLUMNS.join(",") + "\n");
    const onEvent = (e: SortEvent) => {
      if (e.kind === "part") {
        if (values.csv) process.stdout.write(csvRow(e.record));
        else if (!quiet) process.stdout.write(partLine(e.record, style) + "\n");
        if (e.test_frequency && !quiet) note(e.test_frequency.note);
      } else if (e.kind === "waiting") note("waiting for a part …");
      else if (e.kind === "settling") note("part detected, reading again to be sure …");
      else if (e.kind === "removed") note("part removed");
      else if (e.kind === "no-part") note("[NO_RING] nothing rings: put a part on the clips and press Enter again");
      else if (e.kind === "unreadable") note(`[${e.code}] ${cliWording(e.message)} — not recorded; take the part off`);
      else if (e.kind === "setting-changed") note(`setting changed: ${e.message}`);
    };
    await runSort({
      client: tester.client, session, log, trigger, tray, maxParts: count, pollMs,
      lines: trigger === "enter" ? stdinLines("Enter = measure, q = finish: ", stop.signal) : undefined,
      presence: { settle }, measure: { max_peak_v, other_winding_ratio, test_frequency_hz, onBeforePulse: caution.beforePulse, calibration: cal?.applied }, signal: stop.signal, onEvent,
    });
  } finally {
    ctrlC.dispose();
    log.close();
    await tester.close();
  }
  const summary = session.summary();
  if (values.json) process.stdout.write(JSON.stringify({ parts: session.parts, summary, log: { csv: `${base}.csv`, jsonl: `${base}.jsonl` } }, null, 2) + "\n");
  else if (!values.csv) process.stdout.write(summaryText(session, style) + `\n   log appended to ${base}.csv and ${base}.jsonl\n`);
  return 0;
}

function sortSpec(values: { nominal?: string; tol?: string; lot?: string; bins?: string; series?: string }) {
  if (!values.nominal) throw new CliUsageError("sort needs --nominal, e.g. --nominal 10u");
  // Refused up front when the tester cannot measure it: a session would otherwise wait forever.
  const nominal = valueOption(values.nominal, "nominal", "H", MEASURABLE_RANGE)!;
  const tolerance = toleranceOnce("nominal", values.nominal, nominal, values.tol);
  if (!tolerance) throw new CliUsageError("sort needs --tol (5%, J, 0.5u …) or a tolerance letter on the nominal (10uJ)");
  optionValue("tol", () => toleranceLimits(nominal.value, tolerance));
  return {
    nominal_h: nominal.value,
    tolerance,
    lot: values.lot,
    bins: values.bins ? makeBins(values.bins.split(",").map((t) => valueOption(t, "bins", "H")!.value)) : undefined,
    series: values.series ? optionValue("series", () => parseSeriesName(values.series!)) : undefined,
  };
}

const MARK = { conforming: "pass   ", nonconforming: "FAIL   ", inconclusive: "unsure " } as const;

export function partLine(r: PartRecord, style: Style): string {
  const paint = r.decision === "conforming" ? style.good : r.decision === "nonconforming" ? style.bad : style.unsure;
  const bits = [`#${String(r.part).padStart(3)}`, formatMeasured(r.inductance_h, r.inductance_u_h, "H").padEnd(22), paint(MARK[r.decision]), `p ${r.p_conform.toFixed(3)}`];
  if (r.bin) bits.push(`bin ${r.bin}${r.bin_certain ? "" : " (edge)"}`);
  if (r.preferred_h !== null) bits.push(`nearest ${formatValue(r.preferred_h, "H", 3)}`);
  if (r.warnings.length > 0) bits.push(style.dim(`! ${r.warnings.join(" ")}`));
  return bits.join("  ");
}

export function summaryText(session: SortSession, style: Style): string {
  const { tally, stats, limits } = session.summary();
  const lot = session.spec.lot ? `, lot ${session.spec.lot}` : "";
  const lines = [
    `── ${stats.n} part${stats.n === 1 ? "" : "s"}${lot}: ${style.good(`${tally.conforming} pass`)}, ${style.bad(`${tally.nonconforming} fail`)}, ${style.unsure(`${tally.inconclusive} unsure`)}`,
    `   limits       ${formatValue(limits.lower, "H", 4)} … ${formatValue(limits.upper, "H", 4)} (unsure: within U of a limit)`,
  ];
  if (stats.n > 0) {
    // Digits as the readings' uncertainty supports: the largest U of the parts (the mean is no
    // better known than the tester's calibration, which every part shares).
    const u = Math.max(...session.parts.map((p) => p.inductance_u_h));
    const atU = (v: number) => formatValueOnly(v, u, "H");
    const U = formatWithUncertainty(stats.mean, u, "H");
    lines.push(`   mean         ${atU(stats.mean)}, range ${atU(stats.min)} … ${atU(stats.max)} (parts read with U up to ${U.u} ${U.unit})`);
  }
  if (stats.n >= 2) lines.push(`   spread       s = ${formatSi(stats.sd, "H", 3)} (${((100 * stats.sd) / stats.mean).toFixed(2)} %)`);
  if (Number.isFinite(stats.cp)) {
    lines.push(`   capability   Cp ${stats.cp.toFixed(2)}, Cpk ${stats.cpk.toFixed(2)} from ${stats.n} parts (spread includes measurement noise${stats.n < 30 ? "; rough below 30 parts" : ""})`);
  }
  const bins = Object.entries(tally.bins);
  if (bins.length > 0) lines.push(`   bins         ${bins.map(([k, v]) => `${k}: ${v}`).join(", ")}`);
  return lines.join("\n");
}


