// How a procedure's result enters a tester's profile: tank entries replace the ones of the same
// index, the reference rings in series with the nulled leads, a timebase is kept or replaced by the
// one with the smaller uncertainty, and every entry carries its provenance. The same rules for
// every caller (the CLI, another bench app), so each ends with the same profile. Pure.

import { formatWithUncertainty } from "../format/si.ts";
import { formatValue } from "../values/format-value.ts";
import { calibrationChanges, type TankChange } from "./calibration-change.ts";
import { CalibrationError } from "./errors.ts";
import type { CalibrationProfile, FixtureEntry, LeadEntry, SkewEntry, TankEntry, ThresholdEntry, TimebaseEntry } from "./profile-schema.ts";
import type { ReferenceInductor } from "./reference-inductor.ts";
import type { TimebaseResult } from "./timebase.ts";

/** Largest crystal error a timebase may state; beyond it the crystal or the measurement is broken (as the profile check). */
export const MAX_TIMEBASE_PPM = 1000;

/** The profile with `entries` in place of the tank entries of the same index, sorted by index. */
export function withTankEntries(profile: CalibrationProfile, entries: TankEntry[], now: Date = new Date()): CalibrationProfile {
  const replaced = new Set(entries.map((e) => e.index));
  const tanks = [...profile.tanks.filter((t) => !replaced.has(t.index)), ...entries].sort((a, b) => a.index - b.index);
  return { ...profile, tanks, updated: now.toISOString() };
}

/**
 * Each new tank entry against what it replaces (or its nominal value): the change check's input.
 * Like is compared with like: a tank calibrated on the terminals is taken with the profile's
 * fixture added, as readings apply it.
 */
export function tankChanges(profile: CalibrationProfile, entries: TankEntry[]): TankChange[] {
  const fx = profile.fixture?.c_f ?? 0;
  const asApplied = (e: TankEntry): TankEntry => (e.fixture_included === false && fx !== 0 ? { ...e, c_f: e.c_f + fx } : e);
  return calibrationChanges(entries.map(asApplied), profile.tanks.map(asApplied), profile.timebase?.ppm ?? 0);
}

/**
 * The reference as the tank sees it: in series with the leads nulled in this profile (their
 * inductance and its uncertainty added), with a label that says so.
 */
export function referenceThroughLeads(ref: ReferenceInductor, profile: CalibrationProfile, on_terminals = false): ReferenceInductor {
  // On the board's own terminals the reference rings without the leads.
  if (!profile.leads || on_terminals) return ref;
  return {
    ...ref,
    inductance_h: ref.inductance_h + profile.leads.l_h,
    u_inductance_h: Math.hypot(ref.u_inductance_h, profile.leads.u_h),
    label: `${ref.label ?? ""} plus the leads' ${formatValue(profile.leads.l_h, "H", 3)}`.trim(),
  };
}

/** A timebase entered from an external frequency measurement (standard uncertainty, ppm). */
export function enteredTimebase(ppm: number, u_ppm: number, now: Date = new Date(), detail = "entered from an external frequency measurement"): TimebaseEntry {
  if (!Number.isFinite(ppm) || Math.abs(ppm) > MAX_TIMEBASE_PPM) {
    throw new CalibrationError("NONSENSE_RESULT", `${ppm} ppm is beyond any working crystal (at most ±${MAX_TIMEBASE_PPM} ppm); check the counter reading`);
  }
  if (!(u_ppm > 0) || !Number.isFinite(u_ppm)) throw new CalibrationError("BAD_REFERENCE", `the entered timebase needs a positive standard uncertainty, got ${u_ppm} ppm; give the counter's`);
  return { ppm, u_ppm, method: "entered", time: now.toISOString(), detail };
}

/** A timebase measured against the host's clock (measureTimebase), with its provenance. */
export function measuredTimebase(r: TimebaseResult, now: Date = new Date()): TimebaseEntry {
  return {
    ppm: r.ppm, u_ppm: r.u_ppm, method: "host-clock", time: now.toISOString(),
    detail: `${r.samples} reads over ${formatValue(r.duration_s, "s", 4)}; reads ${r.budget.reads_ppm.toFixed(2)} ppm, host clock ${r.budget.host_clock_ppm} ppm (standard)`,
  };
}

export interface TimebaseChoice {
  /** True when the new entry should replace the stored one (there is none, or it is at least as certain). */
  replace: boolean;
  stored?: TimebaseEntry;
  candidate: TimebaseEntry;
  /** One line: which one is better and by how much (expanded uncertainties, k = 2). */
  summary: string;
}

/** `+11.50 ppm ± 0.50 ppm`: the digits follow the expanded uncertainty (k = 2). */
export function ppmText(ppm: number, u_ppm: number): string {
  const f = formatWithUncertainty(ppm, 2 * u_ppm, "");
  return `${ppm >= 0 ? "+" : ""}${f.value} ppm ± ${f.u} ppm (k = 2)`;
}

const describeTimebase = (e: TimebaseEntry) => `${e.method === "entered" ? "entered" : "measured"} timebase ${ppmText(e.ppm, e.u_ppm)}`;

/**
 * A new timebase against the stored one: it replaces it when its uncertainty is no larger, so a
 * short measured run never silently replaces a better entered (or longer measured) value.
 */
export function chooseTimebase(stored: TimebaseEntry | undefined, candidate: TimebaseEntry): TimebaseChoice {
  if (!stored) return { replace: true, candidate, summary: `${describeTimebase(candidate)}; none was stored` };
  const replace = candidate.u_ppm <= stored.u_ppm;
  const summary = replace
    ? `${describeTimebase(candidate)} replaces the stored ${describeTimebase(stored)}`
    : `the new ${describeTimebase(candidate)} is less certain than the stored ${describeTimebase(stored)}`;
  return { replace, stored, candidate, summary };
}

/** The profile with another timebase entry. */
export function withTimebase(profile: CalibrationProfile, entry: TimebaseEntry, now: Date = new Date()): CalibrationProfile {
  return { ...profile, timebase: entry, updated: now.toISOString() };
}

/** The profile with another threshold, skew, lead or fixture entry. */
export function withEntry(profile: CalibrationProfile, key: "thresholds", entry: ThresholdEntry, now?: Date): CalibrationProfile;
export function withEntry(profile: CalibrationProfile, key: "skew", entry: SkewEntry, now?: Date): CalibrationProfile;
export function withEntry(profile: CalibrationProfile, key: "leads", entry: LeadEntry, now?: Date): CalibrationProfile;
export function withEntry(profile: CalibrationProfile, key: "fixture", entry: FixtureEntry, now?: Date): CalibrationProfile;
export function withEntry(profile: CalibrationProfile, key: "thresholds" | "skew" | "leads" | "fixture", entry: ThresholdEntry | SkewEntry | LeadEntry | FixtureEntry, now: Date = new Date()): CalibrationProfile {
  return { ...profile, [key]: entry, updated: now.toISOString() };
}
