// henrytick measure --watch: read the part again and again, with a trend line, a stability
// verdict and, with --big, the value in large characters. On a terminal the block is redrawn in
// place; otherwise (a pipe, a log file) one line per reading. --json gives JSON Lines, --csv rows.

import { formatSi } from "../format/si.ts";
import { MeasureError, measurePart, type MeasureOptions } from "../measure/measure-part.ts";
import { readingResult, type ResultJson } from "../measure/result.ts";
import type { OpenedTester } from "../open-tester.ts";
import { nearestPreferred, parseSeriesName, type SeriesName } from "../values/e-series.ts";
import { formatMeasured, formatValueOnly } from "../values/format-value.ts";
import { bigText } from "../workflows/big-digits.ts";
import { eraseUp, makeStyle, type Style } from "../workflows/terminal.ts";
import { assessStability, History, SettingHistory, sparkline, type StabilityResult } from "../workflows/watch-trend.ts";
import { SettingHold, type HeldReading } from "../workflows/setting-hold.ts";
import { intOption, optionValue } from "./args.ts";
import { csvHeader, csvRow } from "./result-csv.ts";
import { onCtrlC } from "./interrupt.ts";
import { cliWording } from "./errors.ts";

/** Options measure accepts for --watch (spread into its parse table). */
export const WATCH_OPTIONS = {
  watch: { type: "boolean" },
  big: { type: "boolean" },
  count: { type: "string" },
  "interval-ms": { type: "string" },
  csv: { type: "boolean" },
  series: { type: "string" },
} as const;

interface WatchValues {
  json?: boolean;
  csv?: boolean;
  big?: boolean;
  count?: string;
  "interval-ms"?: string;
  series?: string;
}

const CSV_FRONT = ["reading", "time", "stability"];

export async function runWatch(tester: OpenedTester, values: WatchValues, measure: MeasureOptions, title: string): Promise<number> {
  const count = intOption(values.count, "count", 1, 10_000_000);
  const interval = intOption(values["interval-ms"], "interval-ms", 0, 3_600_000) ?? 300;
  const series = values.series ? optionValue("series", () => parseSeriesName(values.series!)) : undefined;
  const style = makeStyle();
  const tty = process.stdout.isTTY === true && !values.json && !values.csv;
  const history = new SettingHistory(40);
  // Ranged once, then held: readings on one tank compare (Q and ESR depend on its frequency).
  const hold = measure.drive === undefined ? new SettingHold() : null;
  const stop = new AbortController();
  // First Ctrl-C: finish after the reading in progress (status 0, as sort and wind); a second press: quit now.
  const ctrlC = onCtrlC(() => stop.abort());
  let drawn = 0;
  let n = 0;
  if (values.csv) process.stdout.write(csvHeader(CSV_FRONT));
  process.stderr.write("   reading again and again (Ctrl-C stops)\n");
  try {
    while (!stop.signal.aborted && (count === undefined || n < count)) {
      let result: ResultJson | null = null;
      let problem = "";
      const wasHeld = hold?.held ?? null;
      const got = await readOnceMore(tester, hold, measure);
      if (got.reading) result = readingResult(got.reading);
      if (got.error) problem = got.error.code === "NO_RING" ? "no part on the clips" : `[${got.error.code}] ${cliWording(got.error.message)}`;
      n++;
      // A verdict never spans a change of setting: the trend starts again, and says why.
      let restart = "";
      if (result && got.reading) {
        const s = got.reading.settings;
        if (history.pushOn(`${s.drive}/${s.tank}`, result.inductance_h, result.inductance_u_h)) restart = `trend restarted: ${got.changed ?? "the setting changed"}`;
      } else if (got.changed) restart = `setting released: ${got.changed}`;
      if (hold?.held && !wasHeld && result && !values.json) {
        note(`setting held for the following readings: ${describeHeld(tester, hold)}; ranging again only for another part or a refused reading`);
        if (result.test_frequency) note(result.test_frequency.note);
      }
      const st = assessStability(history.values, history.u);
      const time = new Date().toISOString();
      if (values.json) {
        const extra = restart ? { trend_restarted: restart } : {};
        process.stdout.write(JSON.stringify(result ? { reading: n, time, ...result, stability: st.state, ...extra, ...(series ? { preferred_h: nearestPreferred(result.inductance_h, series).value } : {}) } : { reading: n, time, error: problem, ...extra }) + "\n");
      } else if (values.csv) {
        if (restart) note(restart);
        if (result) process.stdout.write(csvRow(result, [n, time, st.state]));
      } else {
        if (restart && !tty) process.stdout.write(`   ${restart}\n`);
        let block = values.big ? bigBlock(result, problem, st, history, n, style) : smallBlock(result, problem, st, history, n, title, style);
        if (restart && tty) block = [...block, `   ${restart}`];
        if (series && result) block = [...block, preferredLine(result.inductance_h, series)];
        if (tty) {
          if (drawn > 0) process.stdout.write(eraseUp(drawn));
          process.stdout.write(block.join("\n") + "\n");
          drawn = block.length;
        } else {
          const line = oneLine(result, problem, st, history, n) + (series && result ? `  ${preferredLine(result.inductance_h, series).trim()}` : "");
          process.stdout.write((values.big ? block.join("\n") : line) + "\n");
        }
      }
      if (interval > 0 && !stop.signal.aborted && (count === undefined || n < count)) await pause(interval, stop.signal);
    }
  } finally {
    ctrlC.dispose();
  }
  return history.values.length > 0 ? 0 : 1;
}

/** One reading: on the held setting when there is one (hold), or as asked (a fixed --drive/--tank). */
async function readOnceMore(tester: OpenedTester, hold: SettingHold | null, measure: MeasureOptions): Promise<HeldReading> {
  const opts = { ...measure, onProgress: undefined };
  if (hold) return hold.measure(tester.client, opts);
  try {
    return { reading: await measurePart(tester.client, opts) };
  } catch (e) {
    if (!(e instanceof MeasureError)) throw e;
    return { error: e };
  }
}

function describeHeld(tester: OpenedTester, hold: SettingHold): string {
  const h = hold.held!;
  const p = tester.client.profile;
  return `${formatSi(p.drives[h.drive].ohm, "Ω", 3)} with ${formatSi(p.tanks[h.tank].nominal_f, "F", 3)} (drive ${h.drive}, tank ${h.tank}; rings at ${formatSi(h.f0_hz, "Hz", 3)})`;
}

function note(text: string): void {
  process.stderr.write(`   ${text}\n`);
}

function preferredLine(l_h: number, series: SeriesName): string {
  const p = nearestPreferred(l_h, series);
  const dev = p.deviation_rel * 100;
  return `   nearest ${series} ${formatSi(p.value, "H", 3)} (${dev >= 0 ? "+" : ""}${dev.toFixed(1)} %)`;
}

function stateText(st: StabilityResult, style: Style): string {
  if (st.state === "steady") return style.good("steady");
  if (st.state === "drifting") return style.unsure(`drifting ${st.slope_per_reading > 0 ? "up" : "down"}`);
  if (st.state === "unsteady") return style.bad("unsteady");
  return style.dim("gathering");
}

function trend(h: History): string {
  const u = h.u.length ? h.u[h.u.length - 1] : 0;
  return sparkline(h.values.slice(-24), u / 4);
}

function smallBlock(r: ResultJson | null, problem: string, st: StabilityResult, h: History, n: number, title: string, style: Style): string[] {
  const head = `── ${title}   reading ${n}   ${stateText(st, style)}`;
  if (!r) return [head, `   ${problem}`, `   trend        ${trend(h)}`];
  return [
    head,
    `   inductance   ${style.bold(formatMeasured(r.inductance_h, r.inductance_u_h, "H"))}   Q ${r.q.toPrecision(3)}   ESR ${formatSi(r.esr_ohm, "Ω", 3)}   at ${formatSi(r.f0_hz, "Hz", 3)}`,
    `   trend        ${trend(h)}   ${rangeText(h)}`,
  ];
}

function bigBlock(r: ResultJson | null, problem: string, st: StabilityResult, h: History, n: number, style: Style): string[] {
  const value = r ? formatValueOnly(r.inductance_h, r.inductance_u_h, "H") : "- - -";
  const lines = bigText(value).map((l) => `  ${l}`);
  lines.push("");
  lines.push(r ? `  ± ${formatMeasured(r.inductance_h, r.inductance_u_h, "H").split("± ")[1]} (k = 2)   ${stateText(st, style)}   ${trend(h)}   reading ${n}` : `  ${problem}   reading ${n}`);
  return lines;
}

function oneLine(r: ResultJson | null, problem: string, st: StabilityResult, h: History, n: number): string {
  if (!r) return `#${n}  ${problem}`;
  // Q and ESR belong to the frequency they were read at.
  return `#${n}  ${formatMeasured(r.inductance_h, r.inductance_u_h, "H")}  Q ${r.q.toPrecision(3)} at ${formatSi(r.f0_hz, "Hz", 3)}  ${st.state}  ${trend(h)}`;
}

function rangeText(h: History): string {
  const v = h.values.slice(-24);
  if (v.length < 2) return "";
  return `(last ${v.length}: ${formatSi(Math.min(...v), "H", 4)} … ${formatSi(Math.max(...v), "H", 4)})`;
}

function pause(ms: number, signal: AbortSignal): Promise<void> {
  return new Promise((resolve) => {
    const t = setTimeout(done, ms);
    function done() {
      clearTimeout(t);
      signal.removeEventListener("abort", done);
      resolve();
    }
    signal.addEventListener("abort", done, { once: true });
  });
}
