// Prediction for one drive-resistor x tank-capacitor setting (pure): what a pulse there would
// do to the part and the resistor, what ring and how many usable edges it would give, and the
// uncertainty of L and Q to expect (bound-cache.ts). Physics: docs/method.md §1 (ring), §2-§3
// (edges, bound), §7 (flyback). The charge phase rings too (the part and tank form a parallel
// tank fed through R), so the charge time covers both the L/R rise and that ring's decay.

import { NOMINAL_TIMEBASE_U_REL, nominalTankU } from "../nominal-uncertainty.ts";
import type { DeviceProfile } from "../device/profile.ts";
import { predictedRingBound, rangingWork } from "./bound-cache.ts";
import type { PartEstimate } from "./estimate.ts";
import { lossModel, thresholdScale } from "./estimate.ts";
import { firstPeakShare, volts } from "./safety.ts";
import { unaccountedCapacitanceRelU } from "./unaccounted-capacitance.ts";

export interface PlanLimits {
  /** Highest ring peak allowed, volts (never above the board's clamp). */
  max_peak_v: number;
  /** Fewest timer ticks per ring period for a sound fit. */
  min_ticks_per_period: number;
  /** Where max_peak_v comes from when it is not the plain limit, for refusal messages. */
  why?: string;
}

export interface TankValue {
  c_f: number;
  /** Standard uncertainty. */
  u_f: number;
}

export interface SettingPrediction {
  drive: number;
  tank: number;
  charge_us: number;
  /** Inductor current when the switch opens (as planned), and its worst case if the charge is cut short. */
  i0_a: number;
  i0_worst_a: number;
  /** Current drawn from the supply once charged. */
  supply_current_a: number;
  resistor_energy_j: number;
  resistor_avg_power_w: number;
  resistor_rating_w: number;
  /** Initial ring amplitude A0 and first peak (A0 reduced by a quarter period's decay). */
  a0_v: number;
  peak_v: number;
  clamp_margin_v: number;
  q: number;
  f_hz: number;
  ticks_per_period: number;
  usable_cycles: number;
  usable_edges: number;
  edge_rate_hz: number;
  edge_rate_limit_hz: number;
  /** Change of the reading per picofarad of unaccounted stray capacitance. */
  stray_ppm_per_pf: number;
  /** Expected standard relative uncertainty of L (fit, tank, timebase, stray) and of Q (fit). */
  l_rel_u: number;
  q_rel_u: number;
  l_budget: { fit: number; tank: number; timebase: number; stray: number };
  /** Empty when allowed; otherwise the hard limit it breaks, as a sentence. */
  refused: string;
}

const DEFAULT_NOISE = { sigma_t_s: 3e-9, sigma_v_v: 0.6e-3 };
/** The capture keeps up with at most one edge per 32 ticks on average. */
const TICKS_PER_EDGE_MIN = 32;

export function predictSetting(
  profile: DeviceProfile, est: PartEstimate, drive: number, tank: number, limits: PlanLimits, tankValue?: TankValue,
): SettingPrediction {
  rangingWork.predictions++;
  const r = profile.drives[drive];
  const c = tankValue?.c_f ?? profile.tanks[tank].nominal_f;
  const u_c = tankValue?.u_f ?? nominalTankU(c);
  const loss = lossModel(est);
  const z = Math.sqrt(est.l_h / c);
  const q = 1 / (loss.rs_ohm / z + z * loss.gp_s);
  const w0 = 1 / Math.sqrt(est.l_h * c);
  const alpha = w0 / (2 * q);
  const charge = chargePlan(profile, est.l_h, loss.rs_ohm, r.ohm, c, r.max_charge_us);
  const a0_model = charge.i0 * z;
  let a0 = a0_model;
  if (est.anchor) {
    // Scale from a measured amplitude: the model's errors (diode drop, drive tolerance) cancel.
    const ca = profile.tanks[est.anchor.tank].nominal_f;
    const ra = profile.drives[est.anchor.drive];
    const i0a = chargePlan(profile, est.l_h, loss.rs_ohm, ra.ohm, ca, ra.max_charge_us, est.anchor.charge_us).i0;
    a0 = est.anchor.a0_v * (charge.i0 / i0a) * (z / Math.sqrt(est.l_h / ca));
  }
  // For the limit, the current is bounded as if the winding had no resistance at all: a single
  // Q measurement cannot tell series loss (which would lower the current) from core loss.
  const bound = chargePlan(profile, est.l_h, 0, r.ohm, c, r.max_charge_us, charge.charge_us);
  const a0_worst = a0 * (Math.max(bound.i0_worst, charge.i0_worst) / charge.i0);
  const peak = a0 * firstPeakShare(q);
  const h = thresholdScale(profile);
  const cycles = a0 > h && q > 0.5 ? (q / Math.PI) * Math.log(a0 / h) : 0;
  const f = w0 / (2 * Math.PI);
  const tpp = profile.tick_hz / f;
  const rest_s = restBetweenPulses_s(profile, drive, charge.charge_us);
  const energy = charge.i_final * charge.i_final * r.ohm * charge.charge_us * 1e-6;
  const avgPower = energy / (charge.charge_us * 1e-6 + rest_s);
  const edgeRateLimit = profile.tick_hz / TICKS_PER_EDGE_MIN;
  const fit = fitUncertainty(profile, est, a0, alpha, w0, c, cycles);
  // What the reading will not separate from the tank: the same model as the reading's own U. This
  // is why the advice prefers the largest tank that still rings long enough.
  const stray = unaccountedCapacitanceRelU(c, { tank_calibrated: tankValue !== undefined });
  const budget = { fit: fit.l_rel, tank: u_c / c, timebase: 2 * NOMINAL_TIMEBASE_U_REL, stray };
  const p: SettingPrediction = {
    drive, tank, charge_us: charge.charge_us, i0_a: charge.i0, i0_worst_a: charge.i0_worst,
    supply_current_a: charge.i_final, resistor_energy_j: energy, resistor_avg_power_w: avgPower, resistor_rating_w: r.power_rating_w,
    a0_v: a0, peak_v: peak, clamp_margin_v: profile.clamp_v - a0_worst, q, f_hz: f, ticks_per_period: tpp,
    usable_cycles: cycles, usable_edges: 2 * cycles, edge_rate_hz: 2 * f, edge_rate_limit_hz: edgeRateLimit,
    stray_ppm_per_pf: (1e6 * 1e-12) / c,
    l_rel_u: Math.hypot(budget.fit, budget.tank, budget.timebase, budget.stray), q_rel_u: fit.q_rel, l_budget: budget, refused: "",
  };
  p.refused = refusal(p, limits, a0_worst);
  return p;
}

function refusal(p: SettingPrediction, limits: PlanLimits, a0_worst: number): string {
  // The limit is checked on the undamped amplitude at the worst-case current: a bound, not a guess.
  if (a0_worst > limits.max_peak_v) return `its ring could reach ${volts(a0_worst)}, above the ${volts(limits.max_peak_v)} limit${limits.why ? ` (${limits.why})` : ""}`;
  if (p.q <= 0.5) return "the part would not ring on this tank (overdamped)";
  if (p.ticks_per_period < limits.min_ticks_per_period) return `the ring is too fast for the timer (${p.ticks_per_period.toFixed(0)} ticks per period, ${limits.min_ticks_per_period} needed)`;
  if (p.edge_rate_hz > p.edge_rate_limit_hz) return `edges would come faster than the capture can store them`;
  if (p.resistor_avg_power_w > p.resistor_rating_w) return `the drive resistor would average ${p.resistor_avg_power_w.toFixed(2)} W, over its ${p.resistor_rating_w} W rating`;
  if (p.usable_edges < 8) return `too few edges would clear the comparator thresholds (${p.usable_edges.toFixed(0)})`;
  return "";
}

/**
 * Rest the tester owes between repeats of a pulse of `charge_us` on `drive`, s. With the
 * profile's thermal time constant (docs/protocol.md, "Profile frames"), the steady state of the
 * tester's first-order model: after each pulse the heat is H = P tau (1 - a) / (1 - a b), with
 * a = e^(-t/tau) over the charge t and b = e^(-rest/tau), and it must stay within
 * min(E_pulse, P_cont tau); P is the worst case, the whole supply across the resistor. Older
 * firmware: its fixed floor and duty-cycle rule.
 */
export function restBetweenPulses_s(profile: DeviceProfile, drive: number, charge_us: number): number {
  const r = profile.drives[drive];
  const tau = r.thermal_time_constant_s;
  if (tau === undefined || r.energy_rating_j === undefined) {
    return Math.max(profile.min_rest_ms * 1e-3, profile.rest_per_charge * charge_us * 1e-6);
  }
  const ptau = (profile.supply_v ** 2 / r.ohm) * tau;
  const budget = Math.min(r.energy_rating_j, r.power_rating_w * tau);
  const a = Math.exp(-(charge_us * 1e-6) / tau);
  const b = (1 - (ptau * (1 - a)) / budget) / a;
  if (b >= 1) return 0;
  return b > 0 ? -tau * Math.log(b) : Infinity;
}

/**
 * Charge time and current at opening. Charging until both the L/R rise and the charge-phase
 * ring (decay Rs/2L + 1/2RC) have settled gives I_final; when the firmware's interlock cuts it
 * short, the current may still be on an overshoot, bounded by (1 + e^(-a t)) I_final.
 */
export function chargePlan(
  profile: DeviceProfile, l_h: number, rs_ohm: number, r_ohm: number, c_f: number, max_charge_us: number, fixed_us?: number,
): { charge_us: number; i0: number; i0_worst: number; i_final: number } {
  const loop = r_ohm + rs_ohm;
  const i_final = profile.supply_v / loop;
  const tau_rise_us = (l_h / loop) * 1e6;
  const tau_ring_us = 1e6 / (rs_ohm / (2 * l_h) + 1 / (2 * r_ohm * c_f));
  const settle_us = 5 * Math.max(tau_rise_us, tau_ring_us);
  const charge_us = fixed_us ?? Math.max(2, Math.min(max_charge_us, Math.ceil(settle_us)));
  const rise = 1 - Math.exp(-charge_us / tau_rise_us);
  const overshoot = 1 + Math.exp(-charge_us / tau_ring_us);
  return { charge_us, i0: i_final * rise, i0_worst: i_final * Math.max(rise, charge_us >= settle_us ? 1 : overshoot), i_final };
}

/** Fit-only standard uncertainties of L and Q from the Cramér-Rao bound of the predicted edges. */
function fitUncertainty(profile: DeviceProfile, est: PartEstimate, a0: number, alpha: number, w0: number, c: number, cycles: number): { l_rel: number; q_rel: number } {
  if (!(cycles >= 3) || !(w0 > alpha)) return { l_rel: Infinity, q_rel: Infinity };
  const [vh, vl] = profile.thresholds_v;
  const noise = est.noise ?? DEFAULT_NOISE;
  return predictedRingBound({
    a0_v: a0, alpha_per_s: alpha, wd_rad_s: Math.sqrt(w0 * w0 - alpha * alpha), tank_c_f: c, vh_v: vh, vl_v: vl,
    max_edges: profile.buffer_edges, tick_hz: profile.tick_hz, sigma_t_s: noise.sigma_t_s, sigma_v_v: noise.sigma_v_v,
  });
}
