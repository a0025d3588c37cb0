// Interlocks the host cannot override: the charge-time limit of each drive resistor and the
// thermal budget that sets the rest between pulses. Both assume the worst case for the resistor:
// the whole supply across it (a shorted or very small part), P = V² / R, for the whole charge.
//
// Thermal budget (board.ts has the ratings and their sources): each drive resistor is a
// first-order thermal model. Its heat above ambient, H, decays as e^(-t/tau) and, while the
// switch is closed, moves toward P tau: H_end = P tau - (P tau - H0) e^(-t/tau). A pulse is
// allowed only if H_end stays within H_max = min(E_pulse, P_cont tau): from cold that is the
// single-pulse energy rating, and pulse after pulse it holds the average power at or below the
// continuous rating (steady state H = P_avg tau), so over any interval W the resistor takes in
// at most H_max + P_cont W. The rest owed before a pulse is how long H must cool for that pulse
// to fit: small pulses owe none, a maximum-energy pulse after another owes a few time constants.
//
// The firmware's H never falls below the model's: heat is booked when the capture ends (the
// switch opened earlier), elapsed time is rounded down, and every product rounds toward more
// heat. Heat is counted in nJ (mW x µs), decay factors in Q30 fixed point.

import * as board from "./board.ts";
import { halNow } from "./hal.ts";

const Q: i64 = <i64>1 << 30;
/** After this many time constants the heat left (e^-40 of it) is below 1 nJ: counted as none. */
const COLD_TAUS: i64 = 40;

/** Power in the resistor while the switch is closed, mW (supply² / R with the part shorted). */
export function pulsePowerMw(drive: i32): i64 {
  const mv: i64 = <i64>board.SUPPLY_MV;
  return (mv * mv) / <i64>board.DRIVE_MILLIOHM[drive];
}

/** Heat the resistor may hold, nJ: min(single-pulse energy rating, continuous rating x tau). */
export function budgetNj(drive: i32): i64 {
  const pulse: i64 = <i64>board.DRIVE_ENERGY_UJ[drive] * 1000;
  const steady: i64 = <i64>board.DRIVE_POWER_MW[drive] * <i64>board.DRIVE_TAU_US[drive];
  return pulse < steady ? pulse : steady;
}

/** h x d / 2^30 for 0 <= h < 2^62 and 0 <= d <= 2^30, rounded up or down. */
function mulQ(h: i64, d: i64, up: bool): i64 {
  const low: i64 = (h & (Q - 1)) * d;
  return (h >> 30) * d + ((low + (up ? Q - 1 : 0)) >> 30);
}

/**
 * e^(-us / tauUs) in Q30, bounded from above (`up`) or from below. One microsecond's factor
 * e^-u (u = 1 / tau) lies in [1 - u, 1 - u + u² / 2]; its powers are taken by squaring, every
 * product rounded the same way as the bound.
 */
function decay(us: i64, tauUs: i64, up: bool): i64 {
  if (us <= 0) return Q;
  if (us >= COLD_TAUS * tauUs) return 0;
  const a: i64 = Q / tauUs;
  let base: i64 = up ? Q - a + a / (2 * tauUs) + 2 : Q - a - 1;
  let r: i64 = Q;
  let n: i64 = us;
  while (n > 0) {
    if ((n & 1) != 0) r = mulQ(r, base, up);
    n = n >> 1;
    if (n > 0) base = mulQ(base, base, up);
  }
  return r;
}

/** Upper bound of the heat when a pulse of `chargeUs` on `drive` ends, starting from `h0`. */
function heatAfter(h0: i64, drive: i32, chargeUs: i64): i64 {
  const tau: i64 = <i64>board.DRIVE_TAU_US[drive];
  const ptau: i64 = pulsePowerMw(drive) * tau;
  if (h0 <= ptau) return ptau - mulQ(ptau - h0, decay(chargeUs, tau, false), false);
  return ptau + mulQ(h0 - ptau, decay(chargeUs, tau, true), true);
}

/** Upper bound of heat `h` after `us` of cooling on `drive`. */
function cooled(h: i64, drive: i32, us: i64): i64 {
  return mulQ(h, decay(us, <i64>board.DRIVE_TAU_US[drive], true), true);
}

/**
 * Longest charge time for drive resistor `drive`, µs: its single-pulse energy rating divided by
 * the pulse power (E[µJ] / P[mW] = t[ms], hence the 1000), what a cold resistor's thermal budget
 * allows, and the board's absolute limit.
 */
export function maxChargeUs(drive: i32): i32 {
  const p: i64 = pulsePowerMw(drive);
  let us: i64 = <i64>board.MAX_CHARGE_US;
  if (p > 0) {
    const byEnergy: i64 = (<i64>board.DRIVE_ENERGY_UJ[drive] * 1000) / p;
    if (byEnergy < us) us = byEnergy;
  }
  const budget: i64 = budgetNj(drive);
  if (heatAfter(0, drive, us) > budget) {
    // Largest charge time whose heat fits from cold: heatAfter grows with the charge time.
    let lo: i64 = 0;
    let hi: i64 = us;
    while (hi - lo > 1) {
      const mid: i64 = (lo + hi) >> 1;
      if (heatAfter(0, drive, mid) <= budget) lo = mid;
      else hi = mid;
    }
    us = lo;
  }
  return <i32>us;
}

/**
 * Cooling needed, µs, before a pulse of `chargeUs` on `drive` fits the budget when the resistor
 * now holds `h0` (0 when it fits at once). `chargeUs` must be within maxChargeUs(drive), so a
 * cold resistor always takes it.
 */
function restUs(h0: i64, drive: i32, chargeUs: i32): i32 {
  const budget: i64 = budgetNj(drive);
  const c: i64 = <i64>chargeUs;
  if (heatAfter(h0, drive, c) <= budget) return 0;
  let lo: i64 = 0;
  let hi: i64 = COLD_TAUS * <i64>board.DRIVE_TAU_US[drive];
  while (hi - lo > 1) {
    const mid: i64 = (lo + hi) >> 1;
    if (heatAfter(cooled(h0, drive, mid), drive, c) <= budget) hi = mid;
    else lo = mid;
  }
  return <i32>hi;
}

/** Rest owed after a pulse of maxChargeUs on a cold resistor before another one, µs (for the profile). */
export function restAfterMaxUs(drive: i32): i32 {
  const max: i32 = maxChargeUs(drive);
  return restUs(heatAfter(0, drive, <i64>max), drive, max);
}

// The model's state: heat per drive resistor, as of `updatedAt`. A reset starts cold: restarting
// the board and its USB link takes longer than the longest rest a maximum pulse leaves owed.
const heat = new StaticArray<i64>(board.DRIVE_COUNT);
let updatedAt: i32 = 0;

/** Brings the heat up to now; elapsed time is rounded down to whole µs, the rest carried over. */
function cool(): void {
  const now: i32 = halNow();
  const dt: i32 = now - updatedAt;
  // A negative difference means more than 2^31 ticks have passed (the timer only goes forward).
  const us: i32 = dt < 0 ? 0x7fffffff / board.TICKS_PER_US : dt / board.TICKS_PER_US;
  if (us == 0) return;
  for (let i: i32 = 0; i < board.DRIVE_COUNT; i++) heat[i] = cooled(heat[i], i, <i64>us);
  updatedAt = dt < 0 ? now : updatedAt + us * board.TICKS_PER_US;
}

/** Books a pulse that has just ended (or was cut short: booked in full). */
export function bookPulse(drive: i32, chargeUs: i32): void {
  cool();
  heat[drive] = heatAfter(heat[drive], drive, <i64>chargeUs);
}

/** Ticks of rest still owed before a pulse of `chargeUs` on `drive` may start (0: it may now). */
export function restOwedTicks(drive: i32, chargeUs: i32): i32 {
  cool();
  const us: i32 = restUs(heat[drive], drive, chargeUs);
  return us * board.TICKS_PER_US;
}

