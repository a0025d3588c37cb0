// henrytick wind: after each reading at a known turn count, how many turns to add or remove to
// reach the target, from L ∝ N² refined by a fit over the readings so far.

import { measurePart } from "../measure/measure-part.ts";
import { readingResult } from "../measure/result.ts";
import { deviceCalibration, storeFor } from "../calibration/index.ts";
import { openTester } from "../open-tester.ts";
import { formatMeasured, formatValue } from "../values/format-value.ts";
import { toleranceLimits, type Limits } from "../values/tolerance.ts";
import { coilOnFormer, formerTurnRange } from "../workflows/sim-coil.ts";
import { makeStyle, stdinLines, type Style } from "../workflows/terminal.ts";
import { windingAdvice, type WindingAdvice, type WindingReading } from "../workflows/winding.ts";
import { numberOption, optionValue, parse, testerTarget, toleranceOnce, valueOption } from "./args.ts";
import { MEASURABLE_RANGE } from "../values/range.ts";
import { FREQ_OPTIONS, testFrequencyOption } from "./test-frequency.ts";
import { CliUsageError } from "./errors.ts";
import { onCtrlC } from "./interrupt.ts";
import { resolvePeakLimit } from "../ranging/safety.ts";
import { PulseCaution, windingRatioOption } from "./caution.ts";

export const WIND_HELP = `henrytick wind — wind a coil to a target inductance

Usage:
  henrytick wind (--sim | --port PATH) --target VALUE [--tol TOL] [--turns LIST]

  Tell henrytick how many turns are on the coil, it measures and says how many turns to add
  or remove. With --turns the counts are taken from the list; otherwise type one count per
  line: 36 (turns now on the coil), +3 / -2 (turns added or removed), an empty line to measure
  again, q to finish.

Options:
  --target VALUE    target inductance: 22u, 22 µH, 2m2, 2.2e-3
  --tol TOL         done when the reading conforms to the target ± TOL (5%, J, 0.5u …)
  --turns LIST      turn counts to measure in order, e.g. 30,38,43, or changes: 30,+8,-1
  --max-peak-v V    lower the ring-peak limit (default 30 V; 28.8 V on a 36 V clamp)
  --freq F          working frequency (10k, 100 kHz): each reading rings on the tank nearest it
                    and says how near it came
  --winding-ratio N a second winding on the core has N times the turns (19 or 230:12):
                    every pulse is kept at the limit / N
  --uncalibrated    ignore the tester's calibration profile (nominal tank values)
  --config-dir DIR  where calibration profiles live (default $XDG_CONFIG_HOME/henrytick)
  --seed N          noise seed for the simulated tester
  --json            print the readings and the last advice as JSON at the end
  --csv             print one CSV row per reading

  --sim winds on a simulated 20 mm former with AWG 24 wire (about 4 to 349 turns, 0.6 µH to
  about 230 µH); a target outside that is refused.

Examples:
  henrytick wind --sim --target 22u --turns 30,38
  henrytick wind --sim --target 100u --turns 60,70 --freq 100k
  henrytick wind --port /dev/ttyACM0 --target 150u --tol 2%
`;

const CSV_HEADER = "turns,inductance_h,inductance_u_h,error_rel,decision,recommended_turns,turns_to_change,predicted_h,exponent";

export async function runWindCommand(args: string[]): Promise<number> {
  const { values, positionals } = parse(args, {
    sim: { type: "boolean" }, port: { type: "string" }, seed: { type: "string" }, help: { type: "boolean", short: "h" },
    target: { type: "string" }, tol: { type: "string" }, turns: { type: "string" }, "max-peak-v": { type: "string" }, "winding-ratio": { type: "string" }, uncalibrated: { type: "boolean" }, "config-dir": { type: "string" }, ...FREQ_OPTIONS,
    json: { type: "boolean" }, csv: { type: "boolean" },
  });
  if (values.help) {
    process.stdout.write(WIND_HELP);
    return 0;
  }
  if (positionals.length > 0) throw new CliUsageError(`unexpected argument "${positionals[0]}"`);
  if (values.json && values.csv) throw new CliUsageError("use either --json or --csv, not both");
  if (!values.target) throw new CliUsageError("wind needs --target, e.g. --target 22u");
  const target = valueOption(values.target, "target", "H", MEASURABLE_RANGE)!;
  // The simulated former's reach is known before any pulse: a target it cannot reach is refused.
  const former = values.sim ? formerTurnRange() : undefined;
  if (former) refuseOutOfReach(values.target, target.value, former);
  const tolerance = toleranceOnce("target", values.target, target, values.tol);
  const limits: Limits | undefined = tolerance ? optionValue("tol", () => toleranceLimits(target.value, tolerance)) : undefined;
  const max_peak_v = numberOption(values["max-peak-v"], "max-peak-v", 0.1, 1000);
  const other_winding_ratio = windingRatioOption(values["winding-ratio"]);
  const test_frequency_hz = testFrequencyOption(values);
  const listed = values.turns !== undefined ? turnList(values.turns) : undefined;
  const testerAt = testerTarget(values, []);

  const style = makeStyle();
  const note = (m: string) => process.stderr.write(`   ${m}\n`);
  const tester = await openTester(testerAt);
  const cal = values.uncalibrated ? null : deviceCalibration(tester.client, storeFor({ configDir: values["config-dir"], simulated: tester.sim !== undefined }));
  const readings: WindingReading[] = [];
  let advice: WindingAdvice | null = null;
  const finish = () => {
    if (values.json) process.stdout.write(JSON.stringify({ target_h: target.value, limits: limits ?? null, readings, advice }, null, 2) + "\n");
    if (!advice) note("no reading was taken");
  };
  // Ctrl-C is a normal finish, as in sort: the readings so far are printed (with --json too).
  const ctrlC = onCtrlC(() => {
    finish();
    void tester.close().finally(() => ctrlC.exit(0));
  });
  try {
    note(`winding to ${formatValue(target.value, "H", 4)}${limits ? `, done within ${formatValue(limits.lower, "H", 4)} … ${formatValue(limits.upper, "H", 4)}` : ""}`);
    if (cal?.applied) note(`calibration ${cal.path}`);
    const limit = resolvePeakLimit(max_peak_v, tester.client.profile.clamp_v, false, { other_winding_ratio });
    if (!limit.ok) throw new CliUsageError(limit.message);
    const caution = new PulseCaution({ describe: [tester.scenario?.name, tester.scenario?.story], limit, quiet: false, repeated: true });
    caution.start();
    if (values.csv) process.stdout.write(CSV_HEADER + "\n");
    const counts = listed ? listSource(listed) : stdinLines("turns on the coil now (36, +3, -2; Enter repeats; q finishes): ");
    let turns = 0;
    for await (const line of counts) {
      const t = line.trim();
      if (t.toLowerCase() === "q") break;
      try {
        if (t !== "") turns = /^[+-]/.test(t) ? turns + turnCount(t.slice(1)) * (t[0] === "-" ? -1 : 1) : turnCount(t);
      } catch (e) {
        // At the keyboard a typo (3O for 30) asks again; the readings and the fitted model stay.
        if (listed || !(e instanceof CliUsageError)) throw e;
        note(`${e.message}: type the turns now on the coil (36), +3 / -2, Enter to measure again or q to finish`);
        continue;
      }
      if (turns < 1) {
        note(turns === 0 ? "say how many turns are on the coil first, e.g. 30" : "that leaves fewer than one turn; give the count again");
        turns = Math.max(0, turns);
        continue;
      }
      if (tester.sim) {
        if (former && (turns < former.min || turns > former.max)) throw new CliUsageError(`the simulated former takes ${former.min} to ${former.max} turns, got ${turns}`);
        tester.sim.part = coilOnFormer(turns);
      }
      if (!values.json && !values.csv) note(`measuring ${turns} turns …`);
      const r = await measurePart(tester.client, { max_peak_v, other_winding_ratio, test_frequency_hz, onBeforePulse: caution.beforePulse, label: `${turns} turns`, calibration: cal?.applied });
      const result = readingResult(r);
      if (result.test_frequency && !values.json && !values.csv) note(result.test_frequency.note);
      readings.push({ turns, inductance_h: result.inductance_h, inductance_u_h: result.inductance_u_h });
      advice = windingAdvice(readings, target.value, limits, former);
      if (values.csv) process.stdout.write(csvLine(advice) + "\n");
      else if (!values.json) process.stdout.write(adviceText(advice, target.value, style) + "\n");
      if (advice.last.decision === "conforming") note("on target: the reading conforms to the tolerance");
      const concern = reachText(advice);
      if (concern && !values.json && !values.csv) note(concern);
    }
  } finally {
    ctrlC.dispose();
    await tester.close();
  }
  finish();
  return 0;
}

async function* listSource(list: string[]): AsyncGenerator<string> {
  for (const n of list) yield n;
}

/**
 * The --turns list, checked before any pulse: each entry is a count on the coil (30) or a change
 * from the entry before (+1, -2), as at the keyboard; the first must be a count.
 */
function turnList(text: string): string[] {
  const list = text.split(",").map((t) => t.trim());
  let turns = 0;
  list.forEach((t, i) => {
    const step = /^[+-]/.test(t);
    if (step && i === 0) throw new CliUsageError(`--turns starts with the turns on the coil, then counts or changes: write 30,${t} (30 turns, then ${t}), not "${text}"`);
    const n = step ? turnCount(t.slice(1).trim()) : turnCount(t);
    turns = step ? turns + (t[0] === "-" ? -n : n) : n;
    if (turns < 1) throw new CliUsageError(`--turns: "${t}" leaves ${turns} turns on the coil; each entry must leave at least one turn`);
  });
  return list;
}

/** A target the simulated former cannot reach with its fewest or most turns is refused before any pulse. */
function refuseOutOfReach(text: string, target_h: number, former: { min: number; max: number }): void {
  const lo = coilOnFormer(former.min).inductance_h;
  const hi = coilOnFormer(former.max).inductance_h;
  if (target_h >= lo && target_h <= hi) return;
  throw new CliUsageError(
    `--target ${text}: ${formatValue(target_h, "H", 4)} is ${target_h > hi ? "more" : "less"} than the simulated former reaches, ${formatValue(lo, "H", 3)} (${former.min} turns) to ${formatValue(hi, "H", 3)} (${former.max} turns); choose a target inside that`,
  );
}

/** A line on why the advice should not be followed as it stands, or null. */
export function reachText(a: WindingAdvice): string | null {
  const r = a.reach;
  const need = `the target needs about ${a.turns_for_target.toFixed(0)} ± ${a.turns_for_target_u.toFixed(0)} turns`;
  if (r.concern === "beyond-former" && r.former_turns) {
    return `${need}, but the former takes ${r.former_turns.min} to ${r.former_turns.max} turns: choose a target it reaches, or a longer former or thinner wire`;
  }
  if (r.concern === "far-extrapolation") {
    const [lo, hi] = r.measured_turns;
    const part = Math.round(a.turns_for_target > hi ? Math.sqrt(hi * a.turns_for_target) : Math.sqrt(lo * a.turns_for_target));
    return `${need}, ${r.extrapolation.toFixed(1)}× beyond the counts measured (${lo === hi ? lo : `${lo} to ${hi}`}): the fitted law is a guess that far out; wind to about ${part} turns and measure again before trusting the count`;
  }
  return null;
}

function turnCount(t: string): number {
  const n = Number(t);
  if (t === "" || !Number.isInteger(n) || n < 0 || n > 100_000) throw new CliUsageError(`a turn count is a whole number, got "${t}"`);
  return n;
}

export function adviceText(a: WindingAdvice, target_h: number, style: Style): string {
  const l = a.last;
  const pct = (100 * l.error_rel).toFixed(l.error_rel === 0 || Math.abs(l.error_rel) >= 0.1 ? 1 : 2);
  const verdict = l.decision === "conforming" ? style.good("  on target") : l.decision === "nonconforming" ? "" : l.decision ? style.unsure("  within U of a limit") : "";
  const change = a.turns_to_change === 0 ? "keep the turns" : a.turns_to_change > 0 ? `add ${a.turns_to_change} turn${a.turns_to_change === 1 ? "" : "s"}` : `remove ${-a.turns_to_change} turn${a.turns_to_change === -1 ? "" : "s"}`;
  const nb = a.neighbours.map((n) => `${n.turns}: ${formatValue(n.predicted_h, "H", 3)}`).join(", ");
  return [
    `── ${l.turns} turns: ${formatMeasured(l.inductance_h, l.inductance_u_h, "H")}   ${l.error_rel >= 0 ? "+" : ""}${pct} % from ${formatValue(target_h, "H", 4)}${verdict}`,
    `   next         ${style.bold(change)} → ${a.recommended_turns} turns ≈ ${formatValue(a.predicted_h, "H", 4)}   (${nb})`,
    `   model        L ∝ N^${a.model.exponent.toFixed(2)} from ${a.model.readings} reading${a.model.readings === 1 ? "" : "s"}; target at ${a.turns_for_target.toFixed(1)} ± ${a.turns_for_target_u.toFixed(1)} turns`,
  ].join("\n");
}

function csvLine(a: WindingAdvice): string {
  const l = a.last;
  return [l.turns, l.inductance_h, l.inductance_u_h, l.error_rel, l.decision ?? "", a.recommended_turns, a.turns_to_change, a.predicted_h, a.model.exponent].join(",");
}
