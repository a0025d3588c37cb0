// henrytick calibrate …: run a calibration procedure on the tester and store the result in its
// profile, or show / restore the profile. Parsing and printing only; the work is in calibration/.

import { createInterface } from "node:readline";
import type { CalibrationProfile } from "../calibration/index.ts";
import {
  CalibrationError, appliedCalibration, calibrateSkew, calibrateThresholds, calibrateWithParallelCapacitor, calibrateWithReference,
  emptyProfile, loadProfile, profilePaths, restorePreviousProfile, saveProfile, testerTickCounter, hostClock, measureTimebase, MAX_READ_SPACING_S,
} from "../calibration/index.ts";
import { storeFor, type StoreOptions } from "../calibration/index.ts";
import { formatWithUncertainty } from "../format/si.ts";
import type { OpenedTester } from "../open-tester.ts";
import { openTester } from "../open-tester.ts";
import { intOption, parse, requiredValue, testerTarget } from "./args.ts";
import { MEASURABLE_RANGE } from "../values/range.ts";
import { CliUsageError } from "./errors.ts";
import { resolvePeakLimit } from "../ranging/safety.ts";
import { PulseCaution } from "./caution.ts";
import type { SettingPrediction } from "../ranging/predict.ts";
import { measureLeadInductance } from "../calibration/nulling.ts";
import { measureFixtureCapacitance } from "../calibration/open-nulling.ts";
import { describeChanges } from "../calibration/calibration-change.ts";
import type { TankEntry } from "../calibration/profile-schema.ts";
import { SHORTED_CLIPS } from "../sim/scenario.ts";
import {
  PROFILE_TERM_NAMES, ReferenceMismatchError, checkParallelCapacitor, chooseTimebase, enteredTimebase, measuredTimebase, ppmText, profileTerms, referenceThroughLeads, tankChanges,
  withEntry, withTankEntries, withTimebase,
} from "../calibration/index.ts";
import type { TimebaseEntry } from "../calibration/index.ts";
import { formatMeasured, formatValue, iecCode } from "../values/format-value.ts";

/**
 * A calibration value through the one value parser: `330u`, `4n7`, `330uH`, `1.5e-3`, `4R7`;
 * refused when missing (unless optional), in another unit, or not above `min`.
 */
function quantity(text: string | undefined, name: string, unit: "H" | "F", opts: { optional?: boolean; range?: { min: number; max: number; what: string } } = {}): number | undefined {
  if (text === undefined && opts.optional) return undefined;
  const example = unit === "H" ? "330u" : "4n7";
  // Three bare digits are an inductor marking code (330 = 33 µH): say so, as the value is used.
  if (unit === "H" && text !== undefined && /^\d\d\d$/.test(text.trim())) {
    const t = text.trim();
    const code = Number(t.slice(0, 2)) * 10 ** Number(t[2]) * 1e-6;
    progress(`--${name} ${t} is read as an inductor marking code: ${formatValue(code, "H")} (write ${t}u for ${formatValue(Number(t) * 1e-6, "H")})`);
  }
  const v = requiredValue(text, name, unit, example, opts.range ?? { min: opts.optional ? 0 : Number.MIN_VALUE, max: unit === "H" ? 100 : 1, what: `a positive ${unit === "H" ? "inductance" : "capacitance"}` }).value;
  return v;
}

const COMMON = {
  sim: { type: "boolean" }, port: { type: "string" }, seed: { type: "string" }, json: { type: "boolean" }, "config-dir": { type: "string" },
} as const;

export async function runCalibrate(args: string[]): Promise<number> {
  const [sub, ...rest] = args;
  switch (sub) {
    case "show": return withTester(rest, {}, async (t, store, v) => show(t, store, v.json === true));
    case "restore": return withTester(rest, {}, async (t, store) => restore(t, store));
    case "reference": return withTester(rest, {
      "ref-h": { type: "string" }, "ref-u-h": { type: "string" }, "ref-cs-f": { type: "string" }, "ref-u-cs-f": { type: "string" },
      tanks: { type: "string" }, repeats: { type: "string" }, "ref-label": { type: "string" }, "accept-shift": { type: "boolean" }, "on-terminals": { type: "boolean" },
    }, reference, true);
    case "parallel": return withTester(rest, {
      tank: { type: "string" }, "cap-f": { type: "string" }, "cap-u-f": { type: "string" }, "part-cs-f": { type: "string" }, "part-u-cs-f": { type: "string" }, repeats: { type: "string" }, "accept-shift": { type: "boolean" },
    }, parallel, true);
    case "thresholds": return withTester(rest, { captures: { type: "string" } }, thresholds, true);
    case "skew": return withTester(rest, { captures: { type: "string" }, tanks: { type: "string" } }, skew, true);
    case "timebase": return withTester(rest, { ppm: { type: "string" }, "u-ppm": { type: "string" }, seconds: { type: "string" }, "accept-shift": { type: "boolean" } }, timebase);
    case "short": return withTester(rest, { repeats: { type: "string" } }, short, true);
    case "open": return withTester(rest, { repeats: { type: "string" }, tanks: { type: "string" } }, open, true);
    default:
      throw new CliUsageError(`calibrate needs one of: show, reference, parallel, thresholds, skew, timebase, short, open, restore${sub ? ` (got "${sub}")` : ""}`);
  }
}

type Values = Record<string, string | boolean | undefined>;
/**
 * `caution()` prints the pulse caution: an action calls it once its options are read, before the
 * first pulse. It returns the hook that escalates to the strong caution when a pulse is predicted
 * to ring high (pass it to the procedure as onBeforePulse).
 */
type Caution = () => (p: SettingPrediction) => void;
type Action = (t: OpenedTester, store: StoreOptions, v: Values, caution: Caution) => Promise<number>;

async function withTester(args: string[], extra: Record<string, { type: "string" | "boolean" }>, action: Action, pulses = false): Promise<number> {
  const { values, positionals } = parse(args, { ...COMMON, ...extra });
  const v = values as Values;
  jsonMode = v.json === true;
  const target = testerTarget(v as { sim?: boolean; port?: string; seed?: string }, positionals);
  const tester = await openTester(target);
  const store: StoreOptions = storeFor({ configDir: v["config-dir"] as string | undefined, simulated: tester.sim !== undefined });
  try {
    let shown: PulseCaution | null = null;
    const caution: Caution = () => {
      if (!pulses) return () => {};
      if (!shown) {
        const limit = resolvePeakLimit(undefined, tester.client.profile.clamp_v, false);
        shown = new PulseCaution({ describe: [tester.scenario?.name, tester.scenario?.story], limit, quiet: v.json === true, repeated: true });
        shown.start();
      }
      return shown.beforePulse;
    };
    return await action(tester, store, v, caution);
  } finally {
    await tester.close();
  }
}

const progress = (m: string) => process.stderr.write(`   ${m}\n`);

/** The current profile, or a new empty one; a damaged current profile stops here (restore or recalibrate). */
function currentProfile(t: OpenedTester, store: StoreOptions): CalibrationProfile {
  const id = t.client.identity.device_id;
  return loadProfile(id, store) ?? emptyProfile(id, new Date());
}

/** With --json, the human lines go to stderr and one JSON object (what was stored) to stdout. */
let jsonMode = false;
const say = (text: string) => (jsonMode ? process.stderr : process.stdout).write(text);

function commit(profile: CalibrationProfile, store: StoreOptions, result: unknown): void {
  const r = saveProfile(profile, store);
  say(`   saved ${r.path}${r.previous_kept ? " (previous profile kept)" : ""}\n`);
  if (jsonMode) process.stdout.write(JSON.stringify({ saved: r.path, previous_kept: r.previous_kept, result }, null, 2) + "\n");
}

function show(t: OpenedTester, store: StoreOptions, json: boolean): Promise<number> {
  const id = t.client.identity.device_id;
  const p = loadProfile(id, store);
  const terms = p ? profileTerms(p) : [];
  if (json) {
    process.stdout.write(JSON.stringify({ path: profilePaths(id, store).current, profile: p, terms }, null, 2) + "\n");
    return Promise.resolve(0);
  }
  const lines = [`── calibration of tester ${id}: ${p ? profilePaths(id, store).current : "none (nominal values are used)"}`];
  if (p) {
    const row = (name: string, text: string) => lines.push(`   ${name.padEnd(12)} ${text}`);
    const provenance = (x: { method: string; time: string; detail: string }) => lines.push(`   ${"".padEnd(12)}   ${x.method}, ${x.time}${x.detail ? `: ${x.detail}` : ""}`);
    for (const tank of t.client.profile.tanks) {
      const term = terms.find((x) => x.term === `tank ${tank.index}`);
      if (term) {
        row(term.term, `${term.text}; ${term.role}`);
        provenance(term);
      } else row(`tank ${tank.index}`, `nominal ${formatValue(tank.nominal_f, "F", 3)} (not calibrated)`);
    }
    const absent: Record<string, string> = {
      thresholds: "nominal (henrytick calibrate thresholds)",
      timebase: "nominal (cancels in tanks calibrated against a reference inductor; henrytick calibrate timebase)",
      leads: "not nulled (henrytick calibrate short)",
      skew: "not calibrated: equal rise and fall delays assumed (henrytick calibrate skew)",
      fixture: "not nulled: held by calibrated tanks, an allowance on uncalibrated ones (henrytick calibrate open)",
    };
    for (const name of PROFILE_TERM_NAMES) {
      const term = terms.find((x) => x.term === name);
      if (term) {
        row(name, `${term.text}; ${term.role}`);
        provenance(term);
      } else row(name, absent[name]);
    }
  }
  process.stdout.write(lines.join("\n") + "\n");
  return Promise.resolve(0);
}

async function restore(t: OpenedTester, store: StoreOptions): Promise<number> {
  const p = restorePreviousProfile(t.client.identity.device_id, store);
  say(`   restored the previous profile (updated ${p.updated}); the replaced one is now the previous\n`);
  if (jsonMode) process.stdout.write(JSON.stringify({ restored: true, updated: p.updated }, null, 2) + "\n");
  return 0;
}

async function reference(t: OpenedTester, store: StoreOptions, v: Values, caution: Caution): Promise<number> {
  const entered = {
    inductance_h: quantity(v["ref-h"] as string, "ref-h", "H", { range: MEASURABLE_RANGE })!,
    u_inductance_h: quantity(v["ref-u-h"] as string, "ref-u-h", "H")!,
    self_capacitance_f: quantity(v["ref-cs-f"] as string | undefined, "ref-cs-f", "F", { optional: true }),
    u_self_capacitance_f: quantity(v["ref-u-cs-f"] as string | undefined, "ref-u-cs-f", "F", { optional: true }),
    label: v["ref-label"] as string | undefined,
  };
  const tanks = v.tanks === undefined ? undefined : String(v.tanks).split(",").map((s) => intOption(s.trim(), "tanks", 0, t.client.profile.tanks.length - 1)!);
  const repeats = intOption(v.repeats, "repeats", 1, 50);
  const onBeforePulse = caution();
  const profile = currentProfile(t, store);
  const applied = appliedCalibration(profile, "calibration in progress");
  // The reference rings in series with the nulled leads: the tank sees both.
  const onTerminals = v["on-terminals"] === true;
  const ref = referenceThroughLeads(entered, profile, onTerminals);
  if (onTerminals && t.sim) {
    t.sim.onTerminals = true;
    progress("(simulated) the reference on the board's own terminals, clips and leads unplugged");
  }
  let out;
  try {
    out = await calibrateWithReference(t.client, ref, { tanks, repeats, calibration: applied, timebase_ppm: profile.timebase?.ppm ?? 0, onProgress: progress, onBeforePulse, on_terminals: onTerminals });
  } catch (e) {
    // The library names the likely value; the command names the option to give it with.
    if (e instanceof ReferenceMismatchError) {
      const hint = e.likely_h !== undefined ? ` (--ref-h ${iecCode(e.likely_h, 3)})` : " (--ref-h, with a prefix: 330u for 330 µH)";
      throw new ReferenceMismatchError(e.reading_h, e.entered_h, e.likely_h, e.message + hint);
    }
    throw e;
  }
  for (const r of out.results) {
    say(`   tank ${r.tank}: ${formatMeasured(r.c_f, 2 * r.u_f, "F")} (k = 2), ${signedPercent(r.c_f / r.nominal_f - 1)} from nominal; ${r.readings} rings at ${formatValue(r.f0_hz, "Hz", 6)}\n`);
  }
  for (const s of out.skipped) say(`   tank ${s.tank}: not calibrated, ${s.reason}\n`);
  await confirmChange(out.entries, profile, v["accept-shift"] === true, "check the reference's value and unit (--ref-h) and that the reference, not another part, is on the clips");
  commit(withTankEntries(profile, out.entries), store, { tanks: out.results, skipped: out.skipped });
  return 0;
}

async function parallel(t: OpenedTester, store: StoreOptions, v: Values, caution: Caution): Promise<number> {
  const tank = intOption(v.tank, "tank", 0, t.client.profile.tanks.length - 1);
  if (tank === undefined) throw new CliUsageError("--tank N is required");
  const cap = {
    capacitance_f: quantity(v["cap-f"] as string, "cap-f", "F")!,
    u_capacitance_f: quantity(v["cap-u-f"] as string, "cap-u-f", "F")!,
    part_self_capacitance_f: quantity(v["part-cs-f"] as string | undefined, "part-cs-f", "F", { optional: true }),
    u_part_self_capacitance_f: quantity(v["part-u-cs-f"] as string | undefined, "part-u-cs-f", "F", { optional: true }),
  };
  const repeats = intOption(v.repeats, "repeats", 1, 50);
  checkParallelCapacitor(tank, t.client.profile.tanks[tank].nominal_f, cap);
  const onBeforePulse = caution();
  const profile = currentProfile(t, store);
  const sim = t.sim;
  const connect = sim
    ? async () => {
      // The simulated bench: the capacitor across the clips adds to what is in parallel with the part.
      if (sim.part) sim.part = { ...sim.part, self_capacitance_f: sim.part.self_capacitance_f + cap.capacitance_f };
      progress(`(simulated) ${formatValue(cap.capacitance_f, "F", 3)} clipped across the part`);
    }
    : () => waitForEnter(`clip the ${formatValue(cap.capacitance_f, "F", 3)} capacitor across the part, then press Enter`);
  const { entry, result } = await calibrateWithParallelCapacitor(t.client, tank, cap, connect, {
    repeats, calibration: appliedCalibration(profile, "calibration in progress"),
    timebase_ppm: profile.timebase?.ppm ?? 0, onProgress: progress, onBeforePulse,
  });
  say(`   tank ${tank}: ${formatMeasured(result.c_f, 2 * result.u_f, "F")} (k = 2); ` +
    `${formatValue(result.fa_hz, "Hz", 6)} → ${formatValue(result.fb_hz, "Hz", 6)}; the part reads ${formatValue(result.part_inductance_h, "H", 5)}\n`);
  await confirmChange([entry], profile, v["accept-shift"] === true, "check the capacitor's value and unit (--cap-f) and that it was clipped across the part");
  commit(withTankEntries(profile, [entry]), store, result);
  return 0;
}

async function thresholds(t: OpenedTester, store: StoreOptions, v: Values, caution: Caution): Promise<number> {
  const captures = intOption(v.captures, "captures", 2, 20);
  caution();
  const profile = currentProfile(t, store);
  const { entry, fit } = await calibrateThresholds(t.client, {
    captures, calibration: appliedCalibration(profile, "calibration in progress"), onProgress: progress,
  });
  say(`   thresholds ${formatValue(fit.thresholds_v[0], "V", 4)} / ${formatValue(fit.thresholds_v[1], "V", 4)}: ratio ${plainMeasured(fit.ratio, 2 * fit.u_ratio)}, ` +
    `comparator offset ${formatMeasured(fit.offset_v, 2 * fit.u_offset_v, "V")} (k = 2)\n`);
  commit(withEntry(profile, "thresholds", entry), store, entry);
  return 0;
}

async function skew(t: OpenedTester, store: StoreOptions, v: Values, caution: Caution): Promise<number> {
  const profile = currentProfile(t, store);
  const tanks = v.tanks === undefined ? undefined : String(v.tanks).split(",").map((x) => intOption(x, "tanks", 0, t.client.profile.tanks.length - 1)!);
  caution();
  const { entry, fit } = await calibrateSkew(t.client, {
    captures: intOption(v.captures, "captures", 1, 20), tanks, calibration: appliedCalibration(profile, "calibration in progress"), onProgress: progress,
  });
  say(`   comparator skew (rise minus fall delay) ${formatMeasured(fit.skew_s, 2 * fit.u_skew_s, "s")} (k = 2) from ${fit.rings.length} rings\n`);
  commit(withEntry(profile, "skew", entry), store, entry);
  return 0;
}

async function timebase(t: OpenedTester, store: StoreOptions, v: Values): Promise<number> {
  if (v.ppm === undefined) return measuredTimebaseCommand(t, store, v);
  const ppm = Number(v.ppm);
  const u = Number(v["u-ppm"]);
  if (!Number.isFinite(ppm)) throw new CliUsageError(`--ppm must be a number, got ${JSON.stringify(v.ppm)}`);
  if (!(u > 0)) throw new CliUsageError("--u-ppm U (standard uncertainty of the entered value, ppm, > 0) is required with --ppm");
  const profile = currentProfile(t, store);
  return storeTimebase(profile, enteredTimebase(ppm, u), store, v["accept-shift"] === true);
}

/** Against the host's monotonic clock over --seconds (default 60): the tester's TK counter. */
async function measuredTimebaseCommand(t: OpenedTester, store: StoreOptions, v: Values): Promise<number> {
  const seconds = v.seconds === undefined ? 60 : Number(v.seconds);
  if (!(seconds >= 2 && seconds <= 86400)) throw new CliUsageError(`--seconds must be from 2 to 86400, got ${JSON.stringify(v.seconds)}`);
  const reads = Math.max(11, Math.ceil(seconds / MAX_READ_SPACING_S) + 1);
  progress(`timing the tester's crystal against this computer's clock for ${seconds} s (${reads} reads); keep the computer awake`);
  const counter = testerTickCounter(t.client, t.client.profile.tick_hz);
  let done = 0;
  const clock = { ...hostClock, sleep: async (s: number) => { await hostClock.sleep(s); progress(`read ${++done + 1} of ${reads}`); } };
  const r = await measureTimebase(counter, clock, seconds, reads);
  say(`   measured timebase ${ppmText(r.ppm, r.u_ppm)} over ${formatValue(r.duration_s, "s", 4)}\n`);
  return storeTimebase(currentProfile(t, store), measuredTimebase(r), store, v["accept-shift"] === true);
}

/**
 * A new timebase replaces the stored one only when it is at least as certain, or when the user
 * accepts the worse one (asked on a terminal; elsewhere --accept-shift): a short measured run
 * must not silently replace a better entered value. Says which one is in use.
 */
async function storeTimebase(profile: CalibrationProfile, entry: TimebaseEntry, store: StoreOptions, accepted: boolean): Promise<number> {
  const choice = chooseTimebase(profile.timebase, entry);
  if (!choice.replace) {
    let ok = accepted;
    if (accepted) progress(`accepted a less certain timebase (--accept-shift): ${choice.summary}`);
    else if (process.stdin.isTTY && process.stderr.isTTY) ok = /^y(es)?$/i.test((await ask(`   ${choice.summary}. Replace it? [y/N] `)).trim());
    if (!ok) {
      throw new CalibrationError(
        "CALIBRATION_WORSE",
        `not stored: ${choice.summary}; the stored one stays in use. Measure longer (--seconds) for a smaller uncertainty, or run the same command with --accept-shift to use the new one anyway`,
      );
    }
  }
  if (profile.tanks.some((e) => e.method === "reference-inductor")) {
    progress("tanks calibrated against a reference inductor are rescaled to the new timebase (their crystal error cancelled)");
  }
  say(`   timebase in use: ${entry.method === "entered" ? "entered" : "measured"} ${ppmText(entry.ppm, entry.u_ppm)}\n`);
  commit(withTimebase(profile, entry), store, entry);
  return 0;
}

/** Lead nulling: the clips shorted to each other; the leads' inductance is stored and subtracted from later readings. */
async function short(t: OpenedTester, store: StoreOptions, v: Values, caution: Caution): Promise<number> {
  const repeats = intOption(v.repeats, "repeats", 1, 50);
  caution();
  const profile = currentProfile(t, store);
  const sim = t.sim;
  if (sim) {
    sim.part = SHORTED_CLIPS;
    progress("(simulated) clips shorted to each other");
  } else {
    await waitForEnter("short the two clips to each other (metal to metal, nothing else on them), then press Enter");
  }
  const out = await measureLeadInductance(t.client, { repeats, calibration: appliedCalibration(profile, "calibration in progress"), onProgress: progress });
  say(`   leads: ${formatMeasured(out.entry.l_h, 2 * out.entry.u_h, "H")} (k = 2), subtracted from every later reading; ${out.readings_h.length} rings at ${formatValue(out.f0_hz, "Hz", 4)}\n`);
  commit(withEntry(profile, "leads", out.entry), store, { leads: out.entry, drive: out.drive, tank: out.tank, readings_h: out.readings_h });
  return 0;
}

/**
 * Open nulling: one coil rung on two tanks on the board's own terminals, then on the clips; the
 * difference is the fixture's capacitance, stored and added to every tank whose value lacks it.
 */
async function open(t: OpenedTester, store: StoreOptions, v: Values, caution: Caution): Promise<number> {
  const repeats = intOption(v.repeats, "repeats", 1, 50);
  const tanks = v.tanks === undefined ? undefined : String(v.tanks).split(",").map((x) => intOption(x.trim(), "tanks", 0, t.client.profile.tanks.length - 1)!);
  if (tanks && tanks.length !== 2) throw new CliUsageError(`--tanks takes two tank indices, e.g. --tanks 0,1 (got ${JSON.stringify(v.tanks)})`);
  const onBeforePulse = caution();
  const profile = currentProfile(t, store);
  const sim = t.sim;
  const place = sim
    ? async (where: "terminals" | "clips") => {
      sim.onTerminals = where === "terminals";
      progress(where === "terminals" ? "(simulated) the coil on the board's own terminals, clips and leads unplugged" : "(simulated) the same coil on the clips at the end of the leads");
    }
    : (where: "terminals" | "clips") => waitForEnter(where === "terminals"
      ? "put one coil (some 50 µH to 5 mH) on the board's own terminals, with the clips and leads unplugged, then press Enter"
      : "now put the same coil on the clips at the end of the leads, as parts are measured, then press Enter");
  const out = await measureFixtureCapacitance(t.client, place, {
    repeats, tanks: tanks as [number, number] | undefined, calibration: appliedCalibration(profile, "calibration in progress"), onProgress: progress, onBeforePulse,
  });
  say(`   fixture: ${formatMeasured(out.c_f, 2 * out.u_f, "F")} (k = 2) across the part, added to every tank whose value does not hold it; ` +
    `from a ${formatValue(out.coil_h, "H", 4)} coil on tanks ${out.tanks.join(" and ")} (the leads add ${formatValue(out.leads_h, "H", 3)} to it)\n`);
  commit(withEntry(profile, "fixture", out.entry), store, { fixture: out.entry, tanks: out.tanks, drives: out.drives, coil_h: out.coil_h, leads_h: out.leads_h, terminals: out.terminals, clips: out.clips });
  return 0;
}

/**
 * The change check (calibration-change.ts): a tank calibration that moves its tank by more than
 * chance and tolerance explain is accepted only when confirmed (asked on a terminal; elsewhere
 * refused unless --accept-shift is given), so a mistyped reference cannot shift every reading.
 */
async function confirmChange(entries: TankEntry[], profile: CalibrationProfile, accepted: boolean, check: string): Promise<void> {
  const changes = tankChanges(profile, entries);
  if (!changes.some((c) => c.large)) return;
  const what = describeChanges(changes);
  if (accepted) {
    progress(`accepted a large change (--accept-shift): ${what}`);
    return;
  }
  if (process.stdin.isTTY && process.stderr.isTTY) {
    const answer = await ask(`   this calibration moves ${what}. Store it? [y/N] `);
    if (/^y(es)?$/i.test(answer.trim())) return;
  }
  throw new CalibrationError(
    "CALIBRATION_SHIFT",
    `not stored: this calibration moves ${what}, more than chance and the tanks' tolerance explain. The profile is unchanged; ${check}, then calibrate again. If the change is real (a tank or the fixture was changed), run the same command with --accept-shift`,
  );
}

/** A dimensionless value ± its expanded uncertainty, the digits following the uncertainty. */
function plainMeasured(v: number, u_expanded: number): string {
  const f = formatWithUncertainty(v, u_expanded, "");
  return `${f.value} ± ${f.u}`;
}

function signedPercent(rel: number): string {
  return `${rel >= 0 ? "+" : "−"}${Math.abs(rel * 100).toFixed(2)} %`;
}

function ask(prompt: string): Promise<string> {
  process.stderr.write(prompt);
  return new Promise((resolve) => {
    const rl = createInterface({ input: process.stdin });
    rl.once("line", (line) => {
      rl.close();
      resolve(line);
    });
    rl.once("close", () => resolve(""));
  });
}

function waitForEnter(prompt: string): Promise<void> {
  process.stderr.write(`   ${prompt}\n`);
  return new Promise((resolve) => {
    const rl = createInterface({ input: process.stdin });
    rl.once("line", () => {
      rl.close();
      resolve();
    });
  });
}
