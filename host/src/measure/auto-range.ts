// Automatic ranging: probe gently, then step by the advice. The probe starts at the gentlest
// setting (largest tank, largest drive resistor: the lowest ring voltage for any part) and
// raises the current tenfold only while nothing rings. Each reading refines the estimate (L, the
// loss model, the measured amplitude, the noise) and every setting is re-predicted from it before
// the next pulse, so a part that is not what the probe suggested cannot lead past a limit.

import type { DeviceClient, MeasureSettings } from "../device/client.ts";
import type { RawCapture } from "../device/stream-reader.ts";
import type { Advice } from "../ranging/advice.ts";
import { adviseSettings } from "../ranging/advice.ts";
import type { PartEstimate } from "../ranging/estimate.ts";
import { estimateFromProbe, estimateFromReading, refineEstimate } from "../ranging/estimate.ts";
import type { PlanLimits } from "../ranging/predict.ts";
import type { MeasureOptions, Reading } from "./measure-part.ts";
import { MeasureError, NO_USABLE_RING, describeSetting, readOnce } from "./read-once.ts";
import { explainFailure, shortedPart, SHORT_MAX_L_H } from "./part-fault.ts";
import { WarningCode } from "../codes.ts";
import { resolvePeakLimit, ROUGH_PREDICTION_SHARE as ROUGH_MARGIN, volts } from "../ranging/safety.ts";
import { ReadingProgress, settingInfo } from "./events.ts";
import { MEASURABLE_L_H, MEASURABLE_TEXT } from "../values/range.ts";
import { describeFrequencyChoice, frequencyDistance, orderForFrequency } from "../ranging/choose-setting.ts";
import { formatSi } from "../format/si.ts";

const PROBE_CHARGE_US = 5000;
const PROBE_QUIET_US = 20000;
const PROBE_TIMEOUT_MS = 1000;
const MAX_STEPS = 4;
/** Fewest edges a ranged reading should rest on; fewer is reported with the reason. */
export const MIN_EDGES_AUTO = 20;

/** Largest inductance the probe must stay safe for, henries (the tester's range with margin). */
export const PROBE_MAX_L_H = MEASURABLE_L_H.max;

/**
 * Longest probe charge that keeps the ring below `limit_v` whatever the part, up to
 * PROBE_MAX_L_H. The current at opening is at most V t / L (the inductor's voltage never exceeds
 * the supply) and at most 2 V / R (the charge-phase ring can overshoot V / R twice), so the ring's
 * amplitude I0 sqrt(L/C) is at most V sqrt(2 t / (R C)), reached at L = R t / 2 (and for larger L
 * than PROBE_MAX_L_H the bound only falls).
 */
export function safeProbeChargeUs(supply_v: number, r_ohm: number, c_f: number, limit_v: number): number {
  const ratio = limit_v / supply_v;
  return Math.floor(((ratio * ratio * r_ohm * c_f) / 2) * 1e6);
}

/**
 * The gentle probe: tanks from the largest (lowest ring voltage for any current) down, drive
 * resistors from the largest down, each charge short enough to be safe for any part, until
 * something rings. Returns the first estimate of the part, or throws NO_RING.
 */
export async function probePart(client: DeviceClient, progress: ReadingProgress | ((m: string) => void), limit_v: number): Promise<PartEstimate> {
  const ctx = ReadingProgress.from(progress);
  const profile = client.profile;
  const tanks = profile.tanks.map((t) => t.index).sort((a, b) => profile.tanks[b].nominal_f - profile.tanks[a].nominal_f);
  const drives = profile.drives.map((d) => d.index).sort((a, b) => profile.drives[b].ohm - profile.drives[a].ohm);
  let attempt = 0;
  // Probes a limit below the tester's default shortened (or left out): when nothing rings, that limit may be why.
  const defaultLimit_v = resolvePeakLimit(undefined, profile.clamp_v, false).limit_v;
  let capped = 0;
  let longestCapped = 0;
  for (const tank of tanks) {
    for (const drive of drives) {
      attempt++;
      const safe = safeProbeChargeUs(profile.supply_v, profile.drives[drive].ohm, profile.tanks[tank].nominal_f, limit_v);
      const charge = Math.min(PROBE_CHARGE_US, profile.drives[drive].max_charge_us, safe);
      const atDefault = Math.min(PROBE_CHARGE_US, profile.drives[drive].max_charge_us, safeProbeChargeUs(profile.supply_v, profile.drives[drive].ohm, profile.tanks[tank].nominal_f, defaultLimit_v));
      if (limit_v < defaultLimit_v && Math.max(0, charge) < atDefault && atDefault >= 1) {
        capped++;
        longestCapped = Math.max(longestCapped, Math.max(0, charge));
      }
      if (charge < 1) continue;
      const s: MeasureSettings = { drive, tank, charge_us: charge, edge_limit: profile.buffer_edges, timeout_ms: PROBE_TIMEOUT_MS, quiet_us: PROBE_QUIET_US };
      const raw: RawCapture = await ctx.pulse(client, s, "probe", ctx.probeFraction(attempt, tanks.length * drives.length), `probing: ${describeSetting(client, s)}`);
      const est = estimateFromProbe(profile, drive, tank, charge, raw.ticks, raw.levels);
      if (est) return est;
    }
  }
  if (capped > 0) throw peakLimitedProbe(limit_v, capped, tanks.length * drives.length, longestCapped);
  throw new MeasureError(
    "NO_RING",
    `nothing rang at any drive current: the clips may be open, the part may be a resistor rather than an inductor, or it is far outside ${MEASURABLE_TEXT}; check the connection and measure again`,
  );
}

/**
 * Nothing rang, and the ring-peak limit shortened the probes: the limit is the likely cause, not
 * the clips. The longest charge that keeps every part under the limit grows with the square of
 * the limit (safeProbeChargeUs), so a limit a few times higher gives probes many times longer.
 */
function peakLimitedProbe(limit_v: number, capped: number, of: number, longest_us: number): MeasureError {
  const cut = longest_us >= 1 ? `cut to at most ${Math.floor(longest_us)} µs of charge` : "left out altogether";
  return new MeasureError(
    "NO_RING",
    `nothing rang within the ${volts(limit_v)} ring-peak limit: to keep any part under it, ${capped} of the ${of} probe settings were ${cut}, shorter than at the tester's default limit (the longest safe charge grows with the square of the limit), too little for a ring the comparator can follow. Raise the ring-peak limit (max_peak_v), or leave it at the default; if nothing rings then either, check the clips and the part`,
  );
}

export async function autoRange(client: DeviceClient, limits: PlanLimits, opts: MeasureOptions, progress: ReadingProgress): Promise<Reading> {
  const profile = client.profile;
  const tanks = opts.calibration?.tanks;
  let est = opts.estimate ?? (await probePart(client, progress, limits.max_peak_v));
  let best: Reading | null = null;
  let lastAdvice: Advice[] = [];
  const tried = new Set<string>();
  const failures: string[] = [];
  let chatter: MeasureError | null = null;
  // With an asked test frequency: the nearest tank that rings usably, and the tanks that did not.
  const asked = opts.test_frequency_hz;
  const failedTanks = new Map<number, string>();
  /** The last reading on each tank, to say why a nearer tank's reading was not the one kept. */
  const tankReadings = new Map<number, Reading>();
  // Lowered when a reading shows the part (or tank) changing with amplitude: a saturating core
  // or a class II capacitor reads truest at a gentler ring.
  let gentleLimit_v = limits.max_peak_v;
  for (let step = 0; step < MAX_STEPS; step++) {
    const base = gentleLimit_v < limits.max_peak_v ? { ...limits, max_peak_v: gentleLimit_v, why: "half the ring that changed with its amplitude" } : limits;
    const stepLimits = est.fitted ? base : { ...base, max_peak_v: base.max_peak_v * ROUGH_MARGIN, why: `${ROUGH_MARGIN * 100} % of the ${volts(base.max_peak_v)} limit${base.why ? ` (${base.why})` : ""} while the part is known only from the probe` };
    lastAdvice = adviseSettings(profile, est, stepLimits, tanks);
    if (asked !== undefined) lastAdvice = orderForFrequency(lastAdvice, asked);
    // Once a tank near the asked frequency has given a reading, ranging stays on that tank, or
    // goes to a nearer one that the refined estimate now allows (the probe alone may have kept it out).
    const bestTank: number | undefined = best?.settings.tank;
    const bestDistance = asked === undefined || !best ? Infinity : frequencyDistance(lastAdvice.find((a) => a.tank === bestTank)?.f_hz ?? best.analysis.f0_hz, asked);
    // A best reading whose ring changes with its amplitude is no usable ring: then farther tanks too, nearest first.
    const held = (a: Advice): boolean => asked === undefined || !best || !clean(best) || a.tank === bestTank || frequencyDistance(a.f_hz, asked) < bestDistance - 1e-9;
    const next: Advice | undefined = lastAdvice.find((a) => a.refused === "" && !tried.has(key(a)) && held(a));
    if (!next) break;
    // Precision target: stop once a reading is as good as the best setting is expected to be
    // (never before a nearer tank than the best's has been tried, for an asked frequency).
    const nearerLeft = asked !== undefined && best !== null && next.tank !== bestTank;
    if (!nearerLeft && best && clean(best) && best.analysis.edges_used >= MIN_EDGES_AUTO && relU(best) <= 1.1 * Math.min(...lastAdvice.filter((a) => a.refused === "" && held(a)).map((a) => a.l_rel_u))) break;
    tried.add(key(next));
    const nextSettings = settingsFor(client, next);
    const fraction = progress.stepFraction(step, MAX_STEPS);
    progress.emit({ type: "step", phase: "ranging", step: step + 1, of: MAX_STEPS, setting: settingInfo(client, nextSettings), reason: next.reason, fraction, message: `step ${step + 1}: ${next.reason}` });
    opts.onBeforePulse?.(next);
    let reading: Reading;
    try {
      reading = await readOnce(client, nextSettings, opts, progress, "ranging", fraction);
    } catch (e) {
      if (!(e instanceof MeasureError)) throw e;
      if (!NO_USABLE_RING.includes(e.code)) throw explainFailure(e);
      const why = explainFailure(e);
      if (why !== e) chatter ??= why;
      failures.push(`${next.reason} It gave no usable ring (${e.code}).`);
      if (!failedTanks.has(next.tank)) failedTanks.set(next.tank, `gave no usable ring (${e.code})`);
      continue;
    }
    if (reading.analysis.amplitude_v > limits.max_peak_v) {
      // The physics said otherwise; keep the reading but go no further up.
      const amplitude_v = reading.analysis.amplitude_v;
      progress.emit({ type: "caution", code: "RING_OVER_LIMIT", phase: "ranging", amplitude_v, fraction, message: `caution: the ring reached ${volts(amplitude_v)}, above the ${volts(limits.max_peak_v)} limit; stopping here` });
      return withChoice({ ...reading, prediction: next, advice: lastAdvice });
    }
    tankReadings.set(next.tank, reading);
    est = refineEstimate(est, estimateFromReading(profile, next, reading.analysis));
    if (!best || better(reading, best, asked)) best = { ...reading, prediction: next, advice: lastAdvice };
    if (!clean(reading)) {
      gentleLimit_v = Math.min(gentleLimit_v, 0.5 * reading.analysis.amplitude_v);
      const amplitude_v = reading.analysis.amplitude_v;
      progress.emit({ type: "caution", code: "AMPLITUDE_DEPENDENT", phase: "ranging", amplitude_v, fraction, message: `the ring changes with its amplitude (${reading.analysis.warnings.map((w) => w.code).join(", ")}); trying a gentler setting` });
    }
  }
  if (!best) {
    const why = lastAdvice.slice(0, 3).map((a) => a.reason).join(" ");
    // A fixture that broke every ring up is the diagnosis; a probe ring far below the range with
    // nothing slow enough to capture is a short across the clips.
    if (chatter) throw chatter;
    if (est.l_h < SHORT_MAX_L_H && failures.length === 0) throw shortedPart(est.l_h, `no setting rings slowly enough to capture (${lastAdvice[0]?.reason.replace(/\.$/, "") ?? "every setting refused"})`);
    const at = asked === undefined ? "" : ` near the asked ${formatSi(asked, "Hz", 3)} or at any other frequency`;
    throw new MeasureError("NO_SETTING", [`no setting gives a usable ring${at} within the limits.`, ...failures, why].filter((t) => t !== "").join(" "));
  }
  if (best.analysis.edges_used < MIN_EDGES_AUTO) {
    const w = {
      code: WarningCode.FEW_EDGES_BEST_SETTING,
      message: `the best setting found gives only ${best.analysis.edges_used} edges: the part is too heavily damped for a longer ring within the ${volts(limits.max_peak_v)} limit; the reading rests on few cycles`,
    };
    best.analysis.warnings.push(w);
    // Recorded with the capture, so that analysing it again gives the same warnings.
    best.capture.reading_warnings = [...(best.capture.reading_warnings ?? []), w];
  }
  return withChoice(best);

  function withChoice(r: Reading): Reading {
    if (asked === undefined) return r;
    const failed = new Map(failedTanks);
    for (const [t, other] of tankReadings) {
      if (t === r.settings.tank) continue;
      const edges = other.analysis.edges_used;
      failed.set(t, edges < MIN_EDGES_AUTO ? `gave only ${edges} edges (${MIN_EDGES_AUTO} wanted)` : !clean(other) ? "its ring changed with its amplitude" : "read less well");
    }
    return { ...r, test_frequency: describeFrequencyChoice(profile, lastAdvice, asked, r.settings.tank, r.analysis.f0_hz, { failed }) };
  }
}

/** Warnings that say the ring depends on its amplitude: a gentler setting reads truer. */
const AMPLITUDE_DEPENDENT = new Set(["FREQUENCY_DRIFT", "SUSPECTED_CLIPPING"]);

function clean(r: Reading): boolean {
  return !r.analysis.warnings.some((w) => AMPLITUDE_DEPENDENT.has(w.code));
}

/**
 * A reading with enough edges beats one without; then one whose ring does not change with its
 * amplitude; then, for an asked frequency, the one on the nearer tank; then the smaller
 * uncertainty of L wins.
 */
function better(a: Reading, b: Reading, asked_hz?: number): boolean {
  const ea = a.analysis.edges_used >= MIN_EDGES_AUTO;
  const eb = b.analysis.edges_used >= MIN_EDGES_AUTO;
  if (ea !== eb) return ea;
  if (clean(a) !== clean(b)) return clean(a);
  // For an asked frequency, the reading on the nearer tank.
  if (asked_hz !== undefined && a.settings.tank !== b.settings.tank) {
    return frequencyDistance(a.analysis.f0_hz, asked_hz) < frequencyDistance(b.analysis.f0_hz, asked_hz);
  }
  return relU(a) < relU(b);
}

function relU(r: Reading): number {
  return r.analysis.inductance_u_h / 2 / r.analysis.inductance_h;
}

function key(a: { drive: number; tank: number }): string {
  return `${a.drive}/${a.tank}`;
}

/**
 * How long the comparator must stay quiet before a capture of a ring at `f_hz` ends, µs: 4
 * periods (at least 50 µs). The ring's edges come every half period, so only its end is that
 * quiet; the tester waits this long after the last edge before it sends the capture.
 */
export function quietAfterUs(f_hz: number): number {
  return Math.max(50, Math.ceil(4 * (1e6 / f_hz)));
}

/** Capture settings for a predicted setting: quiet after 4 periods, window 3x the ring. */
export function settingsFor(client: DeviceClient, p: Advice): MeasureSettings {
  const period_us = 1e6 / p.f_hz;
  const quiet = quietAfterUs(p.f_hz);
  const ring_ms = Math.max(p.usable_cycles, 20) * period_us * 1e-3;
  const timeout = Math.min(client.profile.max_timeout_ms, Math.ceil(3 * ring_ms + quiet / 1000 + 20));
  return { drive: p.drive, tank: p.tank, charge_us: p.charge_us, edge_limit: client.profile.buffer_edges, timeout_ms: timeout, quiet_us: quiet };
}
