// The part's inductance corrected for its self-capacitance, its Cs and its self-resonance:
// one auto-ranged reading, then a second on a neighbouring tank, solved by the two-capacitance
// method (two-capacitance.ts) with the capacitances the calibration profile gives.

import type { DeviceClient } from "../device/client.ts";
import type { AppliedCalibration } from "./applied.ts";
import { NOMINAL_TIMEBASE_U_REL, nominalTankU } from "../nominal-uncertainty.ts";
import type { Reading } from "../measure/measure-part.ts";
import { measurePart } from "../measure/measure-part.ts";
import { sharedTimebaseURel } from "./apply-profile.ts";
import { CalibrationError } from "./errors.ts";
import type { CalibrationProfile } from "./profile-schema.ts";
import { MIN_TICKS_PER_PERIOD, estimateOf, fitRelUF0, readOnTank } from "./tank-reading.ts";
import type { TankRing, TwoCapacitanceResult } from "./two-capacitance.ts";
import { solveTwoCapacitance } from "./two-capacitance.ts";
import type { UncertaintyBudget } from "./uncertainty-budget.ts";
import { twoTankBudget } from "./uncertainty-budget.ts";

export interface SelfCapacitanceReading {
  /** The ring on the smaller tank. */
  first: Reading;
  /** The ring on the larger tank. */
  second: Reading;
  result: TwoCapacitanceResult;
  budget: UncertaintyBudget;
}

export interface SelfCapacitanceOptions {
  profile?: CalibrationProfile | null;
  calibration?: AppliedCalibration;
  label?: string;
  onProgress?: (message: string) => void;
  /** The first reading, if the caller already has one (auto-ranged, with the same calibration). */
  first?: Reading;
  /** The two tanks to use; default the auto-ranged tank and a neighbour (the smaller one first). */
  tanks?: [number, number];
}

/** The drive a tank was calibrated with, so the reading sees the same strays. */
function calibrationDrive(profile: CalibrationProfile | null | undefined, tank: number): number | undefined {
  return profile?.tanks.find((t) => t.index === tank)?.drive;
}

/** A reading on `tank` on the drive it was calibrated with, reusing `r` if it already is one. */
async function onCalibratedDrive(client: DeviceClient, r: Reading | undefined, tank: number, opts: SelfCapacitanceOptions): Promise<Reading> {
  const want = calibrationDrive(opts.profile, tank);
  if (r && r.settings.tank === tank && (want === undefined || r.settings.drive === want)) return r;
  const estimate = r ? estimateOf(client, r) : undefined;
  return readOnTank(client, tank, { calibration: opts.calibration, preferDrive: want ?? r?.settings.drive, label: opts.label, onProgress: opts.onProgress, estimate });
}

/** Capacitance of one ring, split into what only this tank has and what both tanks share. */
function tankRing(r: Reading, profile: CalibrationProfile | null | undefined, shared: { rel: number; offset_f: number }): TankRing {
  const c = r.capture.tank_c_f;
  const uTotal = r.capture.tank_c_u_f ?? nominalTankU(c);
  const calibrated = r.capture.calibration?.tank_calibrated === true && profile;
  const uOwn = calibrated ? Math.sqrt(Math.max(0, uTotal ** 2 - (shared.rel * c) ** 2 - shared.offset_f ** 2)) : uTotal;
  return { f0_hz: r.analysis.f0_hz, u_fit_hz: fitRelUF0(r) * r.analysis.f0_hz, c_f: c, u_c_f: uOwn };
}

/**
 * What both tanks share when both were calibrated against a reference: its value's relative
 * uncertainty (a common scale) and its stated Cs (a common offset, which moves Cs, not L).
 */
function sharedReference(profile: CalibrationProfile | null | undefined, a: number, b: number): { rel: number; offset_f: number } {
  const ea = profile?.tanks.find((t) => t.index === a);
  const eb = profile?.tanks.find((t) => t.index === b);
  if (!ea || !eb || ea.method !== "reference-inductor" || eb.method !== "reference-inductor") return { rel: 0, offset_f: 0 };
  return { rel: Math.min(ea.shared_u_rel, eb.shared_u_rel), offset_f: Math.min(ea.shared_offset_u_f ?? 0, eb.shared_offset_u_f ?? 0) };
}

export async function measureSelfCapacitance(client: DeviceClient, opts: SelfCapacitanceOptions = {}): Promise<SelfCapacitanceReading> {
  const tanks = client.profile.tanks;
  if (opts.tanks) {
    const [a, b] = opts.tanks[0] < opts.tanks[1] ? opts.tanks : [opts.tanks[1], opts.tanks[0]];
    if (a === b || a < 0 || b >= tanks.length) throw new RangeError(`"tanks" must be two different tank indices from 0 to ${tanks.length - 1}`);
    const small = await onCalibratedDrive(client, undefined, a, opts);
    const large = await onCalibratedDrive(client, small, b, opts);
    return solvePair(small, large, opts.profile);
  }
  const auto = opts.first ?? (await measurePart(client, { calibration: opts.calibration, label: opts.label, onProgress: opts.onProgress }));
  const t1 = auto.settings.tank;
  const first = await onCalibratedDrive(client, auto, t1, opts);
  // Smaller tank first: it makes Cs a larger share of the capacitance, so Cs is better determined.
  const candidates = [t1 - 1, t1 + 1].filter((t) => t >= 0 && t < tanks.length);
  const reasons: string[] = [];
  let second: Reading | null = null;
  for (const t of candidates) {
    const f = first.analysis.f0_hz * Math.sqrt(tanks[t1].nominal_f / tanks[t].nominal_f);
    if (client.profile.tick_hz / f < MIN_TICKS_PER_PERIOD) {
      reasons.push(`tank ${t}: ring too fast (${(f / 1e3).toFixed(0)} kHz)`);
      continue;
    }
    try {
      second = await onCalibratedDrive(client, first, t, opts);
      break;
    } catch (e) {
      if (!(e instanceof CalibrationError)) throw e;
      reasons.push(`tank ${t}: ${e.message}`);
    }
  }
  if (!second) {
    throw new CalibrationError("TWO_TANKS_UNAVAILABLE", `the part rings usably on one tank only (${reasons.join("; ") || "no neighbouring tank"}); the reading above is the apparent inductance`);
  }
  const [small, large] = second.settings.tank < t1 ? [second, first] : [first, second];
  return solvePair(small, large, opts.profile);
}

function solvePair(small: Reading, large: Reading, profile: CalibrationProfile | null | undefined): SelfCapacitanceReading {
  const opts = { profile };
  const shared = sharedReference(opts.profile, small.settings.tank, large.settings.tank);
  const result = solveTwoCapacitance({
    small: tankRing(small, opts.profile, shared),
    large: tankRing(large, opts.profile, shared),
    timebase_u_rel: sharedTimebaseURel(opts.profile ?? null, [small.settings.tank, large.settings.tank], NOMINAL_TIMEBASE_U_REL),
    shared_c_u_rel: shared.rel,
    // The fixture's capacitance (open nulling), added to both tanks, is one offset common to both.
    shared_c_u_f: Math.hypot(shared.offset_f, Math.min(small.capture.calibration?.fixture_u_f ?? 0, large.capture.calibration?.fixture_u_f ?? 0)),
  });
  const nulled = withoutLeads(result, small.capture.calibration?.lead_inductance_h ?? 0, small.capture.calibration?.lead_u_h ?? 0);
  return { first: small, second: large, result: nulled, budget: twoTankBudget(nulled) };
}

/**
 * The leads' inductance (calibrate short) taken out of the two-tank L: both rings include the
 * leads in series with the part, so the solved L is L_part + L_leads; L_part = L − L_leads with
 * u(L_leads) added in quadrature (independent, JCGM 100:2008 §5.1.2), as for one tank
 * (nulling-reading.ts). The part's self-resonance is that of L_part with Cs: f scales by
 * √(L / L_part), its relative uncertainty kept. Cs is what the two tanks see across the part and
 * stays as solved.
 */
export function withoutLeads(r: TwoCapacitanceResult, l_leads_h: number, u_leads_h: number): TwoCapacitanceResult {
  if (!(l_leads_h > 0)) return r;
  const l = r.inductance_h - l_leads_h;
  const srfScale = l > 0 ? Math.sqrt(r.inductance_h / l) : 1;
  return {
    ...r,
    inductance_h: l,
    srf_hz: r.srf_hz === null ? null : r.srf_hz * srfScale,
    u: { ...r.u, inductance_h: Math.hypot(r.u.inductance_h, u_leads_h), srf_hz: r.u.srf_hz === null ? null : r.u.srf_hz * srfScale },
    inductance_groups: [...r.inductance_groups, { group: "leads", u_h: u_leads_h }],
  };
}
