// Interlocks the host cannot override: the charge-time limit of each drive resistor and the rest
// owed after every pulse. Both are derived from the board profile's ratings, assuming the worst
// case for the resistor: the whole supply across it (a shorted or very small part).

import * as board from "./board.ts";
import { halNow } from "./hal.ts";

/** Power in the resistor while the switch is closed, mW (supply² / R with the part shorted). */
export function pulsePowerMw(drive: i32): i64 {
  const mv: i64 = <i64>board.SUPPLY_MV;
  return (mv * mv) / <i64>board.DRIVE_MILLIOHM[drive];
}

/**
 * Longest charge time for drive resistor `drive`, µs: its pulse energy rating divided by the
 * pulse power, capped by the board's absolute limit. E[µJ] / P[mW] = t[ms], hence the 1000.
 */
export function maxChargeUs(drive: i32): i32 {
  const p: i64 = pulsePowerMw(drive);
  let us: i64 = <i64>board.MAX_CHARGE_US;
  if (p > 0) {
    const byEnergy: i64 = (<i64>board.DRIVE_ENERGY_UJ[drive] * 1000) / p;
    if (byEnergy < us) us = byEnergy;
  }
  return <i32>us;
}

/**
 * Rest owed after a pulse of `chargeUs` on `drive`, in ticks: the board minimum, the board's
 * duty-cycle floor, and what keeps the resistor's average power within its continuous rating
 * (P_pulse · t_on / (t_on + t_rest) ≤ P_cont ⇒ t_rest ≥ t_on · (P_pulse / P_cont − 1)).
 */
export function restTicksAfter(drive: i32, chargeUs: i32): i32 {
  const chargeTicks: i64 = <i64>chargeUs * board.TICKS_PER_US;
  let rest: i64 = <i64>board.MIN_REST_MS * board.TICKS_PER_MS;
  const duty: i64 = chargeTicks * board.REST_PER_CHARGE;
  if (duty > rest) rest = duty;
  const p: i64 = pulsePowerMw(drive);
  const cont: i64 = <i64>board.DRIVE_POWER_MW[drive];
  if (cont > 0 && p > cont) {
    const thermal: i64 = (chargeTicks * (p - cont)) / cont;
    if (thermal > rest) rest = thermal;
  }
  return <i32>rest;
}

let restFrom: i32 = 0;
let restTicks: i32 = 0;
let resting: bool = false;

/** Starts the rest owed for a pulse that has just ended (or was cut short: same rest). */
export function startRest(drive: i32, chargeUs: i32): void {
  restTicks = restTicksAfter(drive, chargeUs);
  restFrom = halNow();
  resting = true;
}

/** True while the rest interlock still forbids a new pulse. */
export function restPending(): bool {
  if (!resting) return false;
  if (halNow() - restFrom >= restTicks) resting = false;
  return resting;
}

/** Ticks of rest still owed (0 when none), so the main loop can ask to be woken. */
export function restRemaining(): i32 {
  if (!restPending()) return 0;
  return restTicks - (halNow() - restFrom);
}
