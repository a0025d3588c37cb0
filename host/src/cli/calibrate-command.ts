// henrytick calibrate …: run a calibration procedure on the tester and store the result in its
// profile, or show / restore the profile. Parsing and printing only; the work is in calibration/.

import { createInterface } from "node:readline";
import type { CalibrationProfile } from "../calibration/index.ts";
import {
  CalibrationError, appliedCalibration, calibrateSkew, calibrateThresholds, calibrateWithParallelCapacitor, calibrateWithReference,
  emptyProfile, loadProfile, profilePaths, restorePreviousProfile, saveProfile, testerTickCounter, hostClock, measureTimebase, MAX_READ_SPACING_S,
} from "../calibration/index.ts";
import { storeFor, type StoreOptions } from "../calibration/index.ts";
import { formatSi } from "../format/si.ts";
import type { OpenedTester } from "../open-tester.ts";
import { openTester } from "../open-tester.ts";
import { intOption, parse, requiredValue, testerTarget } from "./args.ts";
import { MEASURABLE_RANGE } from "../values/range.ts";
import { CliUsageError } from "./errors.ts";
import { resolvePeakLimit } from "../ranging/safety.ts";
import { PulseCaution } from "./caution.ts";
import type { SettingPrediction } from "../ranging/predict.ts";
import { measureLeadInductance } from "../calibration/nulling.ts";
import { calibrationChanges, describeChanges } from "../calibration/calibration-change.ts";
import type { TankEntry } from "../calibration/profile-schema.ts";
import { SHORTED_CLIPS } from "../sim/scenario.ts";

/**
 * A calibration value through the one value parser: `330u`, `4n7`, `330uH`, `1.5e-3`, `4R7`;
 * refused when missing (unless optional), in another unit, or not above `min`.
 */
function quantity(text: string | undefined, name: string, unit: "H" | "F", opts: { optional?: boolean; range?: { min: number; max: number; what: string } } = {}): number | undefined {
  if (text === undefined && opts.optional) return undefined;
  const example = unit === "H" ? "330u" : "4n7";
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
      tanks: { type: "string" }, repeats: { type: "string" }, "ref-label": { type: "string" }, "accept-shift": { type: "boolean" },
    }, reference, true);
    case "parallel": return withTester(rest, {
      tank: { type: "string" }, "cap-f": { type: "string" }, "cap-u-f": { type: "string" }, "part-cs-f": { type: "string" }, "part-u-cs-f": { type: "string" }, repeats: { type: "string" }, "accept-shift": { type: "boolean" },
    }, parallel, true);
    case "thresholds": return withTester(rest, { captures: { type: "string" } }, thresholds, true);
    case "skew": return withTester(rest, { captures: { type: "string" }, tanks: { type: "string" } }, skew, true);
    case "timebase": return withTester(rest, { ppm: { type: "string" }, "u-ppm": { type: "string" }, seconds: { type: "string" } }, timebase);
    case "short": return withTester(rest, { repeats: { type: "string" } }, short, true);
    default:
      throw new CliUsageError(`calibrate needs one of: show, reference, parallel, thresholds, skew, timebase, short, restore${sub ? ` (got "${sub}")` : ""}`);
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
  profile.updated = new Date().toISOString();
  const r = saveProfile(profile, store);
  say(`   saved ${r.path}${r.previous_kept ? " (previous profile kept)" : ""}\n`);
  if (jsonMode) process.stdout.write(JSON.stringify({ saved: r.path, previous_kept: r.previous_kept, result }, null, 2) + "\n");
}

function show(t: OpenedTester, store: StoreOptions, json: boolean): Promise<number> {
  const id = t.client.identity.device_id;
  const p = loadProfile(id, store);
  if (json) {
    process.stdout.write(JSON.stringify({ path: profilePaths(id, store).current, profile: p }, null, 2) + "\n");
    return Promise.resolve(0);
  }
  const lines = [`── calibration of tester ${id}: ${p ? profilePaths(id, store).current : "none (nominal values are used)"}`];
  if (p) {
    const applied = appliedCalibration(p, "");
    for (const tank of t.client.profile.tanks) {
      const e = p.tanks.find((x) => x.index === tank.index);
      const now = applied.tanks?.[tank.index];
      lines.push(e && now
        ? `   tank ${tank.index}       ${formatSi(now.c_f, "F", 5)} ± ${formatSi(2 * now.u_f, "F", 2)} (k = 2), nominal ${formatSi(tank.nominal_f, "F", 3)}; ${e.method} ${e.time}`
        : `   tank ${tank.index}       nominal ${formatSi(tank.nominal_f, "F", 3)} (not calibrated)`);
    }
    lines.push(p.thresholds
      ? `   thresholds   ${formatSi(p.thresholds.thresholds_v[0], "V", 4)} / ${formatSi(p.thresholds.thresholds_v[1], "V", 4)}, ratio ${p.thresholds.ratio.toFixed(3)} ± ${(2 * p.thresholds.u_ratio).toFixed(3)}; ${p.thresholds.time}`
      : "   thresholds   nominal");
    lines.push(p.timebase
      ? `   timebase     ${p.timebase.ppm.toFixed(2)} ppm ± ${(2 * p.timebase.u_ppm).toFixed(2)} ppm (k = 2); ${p.timebase.method} ${p.timebase.time}`
      : "   timebase     nominal (cancels in tanks calibrated against a reference inductor)");
    lines.push(p.leads
      ? `   leads        ${formatSi(p.leads.l_h, "H", 4)} ± ${formatSi(2 * p.leads.u_h, "H", 2)} (k = 2), subtracted; ${p.leads.method} ${p.leads.time}`
      : "   leads        not nulled (henrytick calibrate short)");
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
  const ref = {
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
  if (profile.leads) {
    ref.inductance_h += profile.leads.l_h;
    ref.u_inductance_h = Math.hypot(ref.u_inductance_h, profile.leads.u_h);
    ref.label = `${ref.label ?? ""} plus the leads' ${formatSi(profile.leads.l_h, "H", 3)}`.trim();
  }
  const out = await calibrateWithReference(t.client, ref, { tanks, repeats, calibration: applied, timebase_ppm: profile.timebase?.ppm ?? 0, onProgress: progress, onBeforePulse });
  for (const r of out.results) {
    say(`   tank ${r.tank}: ${formatSi(r.c_f, "F", 5)} ± ${formatSi(2 * r.u_f, "F", 2)} (k = 2), ${((r.c_f / r.nominal_f - 1) * 100).toFixed(2)} % from nominal; ${r.readings} rings at ${formatSi(r.f0_hz, "Hz", 6)}\n`);
  }
  for (const s of out.skipped) say(`   tank ${s.tank}: not calibrated, ${s.reason}\n`);
  await confirmChange(out.entries, profile, v["accept-shift"] === true, "check the reference's value and unit (--ref-h) and that the reference, not another part, is on the clips");
  for (const e of out.entries) profile.tanks = [...profile.tanks.filter((x) => x.index !== e.index), e].sort((a, b) => a.index - b.index);
  commit(profile, store, { tanks: out.results, skipped: out.skipped });
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
  const onBeforePulse = caution();
  const profile = currentProfile(t, store);
  const sim = t.sim;
  const connect = sim
    ? async () => {
      // The simulated bench: the capacitor across the clips adds to what is in parallel with the part.
      if (sim.part) sim.part = { ...sim.part, self_capacitance_f: sim.part.self_capacitance_f + cap.capacitance_f };
      progress(`(simulated) ${formatSi(cap.capacitance_f, "F", 3)} clipped across the part`);
    }
    : () => waitForEnter(`clip the ${formatSi(cap.capacitance_f, "F", 3)} capacitor across the part, then press Enter`);
  const { entry, result } = await calibrateWithParallelCapacitor(t.client, tank, cap, connect, {
    repeats, calibration: appliedCalibration(profile, "calibration in progress"),
    timebase_ppm: profile.timebase?.ppm ?? 0, onProgress: progress, onBeforePulse,
  });
  say(`   tank ${tank}: ${formatSi(result.c_f, "F", 5)} ± ${formatSi(2 * result.u_f, "F", 2)} (k = 2); ` +
    `${formatSi(result.fa_hz, "Hz", 6)} → ${formatSi(result.fb_hz, "Hz", 6)}; the part reads ${formatSi(result.part_inductance_h, "H", 5)}\n`);
  await confirmChange([entry], profile, v["accept-shift"] === true, "check the capacitor's value and unit (--cap-f) and that it was clipped across the part");
  profile.tanks = [...profile.tanks.filter((x) => x.index !== tank), entry].sort((a, b) => a.index - b.index);
  commit(profile, store, result);
  return 0;
}

async function thresholds(t: OpenedTester, store: StoreOptions, v: Values, caution: Caution): Promise<number> {
  const captures = intOption(v.captures, "captures", 2, 20);
  caution();
  const profile = currentProfile(t, store);
  const { entry, fit } = await calibrateThresholds(t.client, {
    captures, calibration: appliedCalibration(profile, "calibration in progress"), onProgress: progress,
  });
  say(`   thresholds ${formatSi(fit.thresholds_v[0], "V", 4)} / ${formatSi(fit.thresholds_v[1], "V", 4)}: ratio ${fit.ratio.toFixed(3)} ± ${(2 * fit.u_ratio).toFixed(3)}, ` +
    `comparator offset ${(fit.offset_v * 1e3).toFixed(3)} mV ± ${(2 * fit.u_offset_v * 1e3).toFixed(3)} mV (k = 2)\n`);
  profile.thresholds = entry;
  commit(profile, store, entry);
  return 0;
}

async function skew(t: OpenedTester, store: StoreOptions, v: Values, caution: Caution): Promise<number> {
  const profile = currentProfile(t, store);
  const tanks = v.tanks === undefined ? undefined : String(v.tanks).split(",").map((x) => intOption(x, "tanks", 0, t.client.profile.tanks.length - 1)!);
  caution();
  const { entry, fit } = await calibrateSkew(t.client, {
    captures: intOption(v.captures, "captures", 1, 20), tanks, calibration: appliedCalibration(profile, "calibration in progress"), onProgress: progress,
  });
  say(`   comparator skew (rise minus fall delay) ${(fit.skew_s * 1e9).toFixed(2)} ns ± ${(2 * fit.u_skew_s * 1e9).toFixed(2)} ns (k = 2) from ${fit.rings.length} rings\n`);
  profile.skew = entry;
  commit(profile, store, entry);
  return 0;
}

async function timebase(t: OpenedTester, store: StoreOptions, v: Values): Promise<number> {
  if (v.ppm === undefined) return measuredTimebase(t, store, v);
  const ppm = Number(v.ppm);
  const u = Number(v["u-ppm"]);
  if (!Number.isFinite(ppm)) throw new CliUsageError(`--ppm must be a number, got ${JSON.stringify(v.ppm)}`);
  if (!(u > 0)) throw new CliUsageError("--u-ppm U (standard uncertainty of the entered value, ppm, > 0) is required with --ppm");
  const profile = currentProfile(t, store);
  if (profile.tanks.some((e) => e.method === "reference-inductor")) {
    progress("tanks calibrated against a reference inductor are rescaled to the new timebase (their crystal error cancelled)");
  }
  if (Math.abs(ppm) > 1000) throw new CalibrationError("NONSENSE_RESULT", `${ppm} ppm is beyond any working crystal; check the counter reading`);
  profile.timebase = { ppm, u_ppm: u, method: "entered", time: new Date().toISOString(), detail: "entered from an external frequency measurement" };
  say(`   timebase ${ppm} ppm ± ${2 * u} ppm (k = 2)\n`);
  commit(profile, store, profile.timebase);
  return 0;
}

/** Against the host's monotonic clock over --seconds (default 60): the tester's TK counter. */
async function measuredTimebase(t: OpenedTester, store: StoreOptions, v: Values): Promise<number> {
  const seconds = v.seconds === undefined ? 60 : Number(v.seconds);
  if (!(seconds >= 2 && seconds <= 86400)) throw new CliUsageError(`--seconds must be from 2 to 86400, got ${JSON.stringify(v.seconds)}`);
  const reads = Math.max(11, Math.ceil(seconds / MAX_READ_SPACING_S) + 1);
  progress(`timing the tester's crystal against this computer's clock for ${seconds} s (${reads} reads); keep the computer awake`);
  const counter = testerTickCounter(t.client, t.client.profile.tick_hz);
  let done = 0;
  const clock = { ...hostClock, sleep: async (s: number) => { await hostClock.sleep(s); progress(`read ${++done + 1} of ${reads}`); } };
  const r = await measureTimebase(counter, clock, seconds, reads);
  const profile = currentProfile(t, store);
  if (profile.tanks.some((e) => e.method === "reference-inductor")) {
    progress("tanks calibrated against a reference inductor are rescaled to the new timebase (their crystal error cancelled)");
  }
  profile.timebase = {
    ppm: r.ppm, u_ppm: r.u_ppm, method: "host-clock", time: new Date().toISOString(),
    detail: `${r.samples} reads over ${r.duration_s.toFixed(1)} s; reads ${r.budget.reads_ppm.toFixed(2)} ppm, host clock ${r.budget.host_clock_ppm} ppm (standard)`,
  };
  say(`   timebase ${r.ppm.toFixed(2)} ppm ± ${(2 * r.u_ppm).toFixed(2)} ppm (k = 2) over ${r.duration_s.toFixed(1)} s\n`);
  commit(profile, store, profile.timebase);
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
  say(`   leads: ${formatSi(out.entry.l_h, "H", 4)} ± ${formatSi(2 * out.entry.u_h, "H", 2)} (k = 2), subtracted from every later reading; ${out.readings_h.length} rings at ${formatSi(out.f0_hz, "Hz", 4)}\n`);
  profile.leads = out.entry;
  commit(profile, store, { leads: out.entry, drive: out.drive, tank: out.tank, readings_h: out.readings_h });
  return 0;
}

/**
 * The change check (calibration-change.ts): a tank calibration that moves its tank by more than
 * chance and tolerance explain is accepted only when confirmed (asked on a terminal; elsewhere
 * refused unless --accept-shift is given), so a mistyped reference cannot shift every reading.
 */
async function confirmChange(entries: TankEntry[], profile: CalibrationProfile, accepted: boolean, check: string): Promise<void> {
  const changes = calibrationChanges(entries, profile.tanks, profile.timebase?.ppm ?? 0);
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
