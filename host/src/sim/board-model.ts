// Physical values of the simulated reference front end (docs/hardware.md). These are the
// "actual" component values of one particular simulated board; the firmware's profile carries
// the nominal ones, and the difference is what calibration measures. Actual values sit inside the
// parts' tolerances (resistors ±1 %, tank capacitors ±1 % C0G / film).

import type { ComparatorModel, TimerModel } from "./comparator-edges.ts";
import type { ContactChatter } from "./fixture-chatter.ts";

export interface BoardModel {
  supply_v: number;
  /** Drive resistors including their selector switch, ohms, indexed as in the firmware profile. */
  drive_ohm: number[];
  /** Tank capacitors including relay contacts and wiring, farads. */
  tank_f: number[];
  /** Test clips and leads, in parallel with the tank, farads. */
  fixture_f: number;
  /**
   * Series inductance of the test leads and clips, in series with the part, henries (0: the part
   * sits on the terminals). The part's own self-capacitance stays lumped with the tank.
   */
  lead_h?: number;
  /** Switch-node capacitance from the part's lower end to ground (blocking diode + switch), farads. */
  switch_node_f: number;
  /** The comparator's input divider from D to ground (its T-side twin is swamped by R), ohms. */
  sense_ohm: number;
  /** Low-side switch on-resistance, ohms. */
  switch_on_ohm: number;
  /** Forward drop of the blocking diode in series with the switch, volts. */
  diode_v: number;
  /** Ring amplitude at which the flyback clamp starts to conduct, volts. */
  clamp_v: number;
  /** Dynamic resistance of the clamp once conducting, ohms. */
  clamp_ohm: number;
  /** Tank voltage coefficient k, C(v) = C0 (1 - k v^2); 0 for C0G and film. */
  tank_k_per_v2: number;
  /** An intermittent clip contact (fixture-chatter.ts); absent for sound contacts. */
  contact_chatter?: ContactChatter;
  comparator: ComparatorModel;
  timer: TimerModel;
  device_id: number;
}

/** The nominal board: every part exactly at its nominal value, ideal comparator timing. */
export function nominalBoard(): BoardModel {
  return {
    supply_v: 5.0,
    drive_ohm: [10, 100, 1000, 10000],
    tank_f: [1e-9, 10e-9, 100e-9, 1e-6],
    fixture_f: 0,
    switch_node_f: 0,
    sense_ohm: Infinity,
    switch_on_ohm: 0.05,
    diode_v: 0,
    clamp_v: 36,
    clamp_ohm: 1,
    tank_k_per_v2: 0,
    comparator: { rising_v: 0.035, falling_v: -0.005, jitter_s: 4e-9, noise_v: 0.5e-3, delay_rise_s: 60e-9, delay_fall_s: 60e-9 },
    timer: { tick_hz: 64e6, ppm: 0, dead_time_s: 40e-9 },
    device_id: 0x5eed0001,
  };
}

/** The simulated tester's default board: one plausible unit off the line. */
export function referenceBoard(): BoardModel {
  return {
    supply_v: 5.0,
    drive_ohm: [10.09, 100.4, 998.2, 10012],
    tank_f: [1.0031e-9, 9.978e-9, 100.44e-9, 0.99620e-6],
    fixture_f: 2.5e-12,
    switch_node_f: 18e-12,
    sense_ohm: 400e3,
    switch_on_ohm: 0.05,
    diode_v: 0.35,
    clamp_v: 36,
    clamp_ohm: 1,
    tank_k_per_v2: 0,
    comparator: {
      rising_v: 0.035,
      falling_v: -0.005,
      offset_v: 0.4e-3,
      jitter_s: 2e-9,
      noise_v: 0.6e-3,
      noise_bw_hz: 2e6,
      delay_rise_s: 45e-9,
      delay_fall_s: 45e-9,
      overdrive_v_s: 2e-12,
      // Edges by first passage of ring + continuous noise (docs/hardware.md, "Comparator model
      // and its validation"); the tester's profile (PD) tells the analysis these values.
    },
    timer: { tick_hz: 64e6, ppm: 11.5, dead_time_s: 30e-9 },
    device_id: 0x5eed0001,
  };
}

/** The board with a scenario's bench conditions applied. */
export function boardWithFixture(
  board: BoardModel, fixture: { capacitance_f?: number; lead_inductance_h?: number; tank_voltage_coefficient_per_v2?: number; chatter?: ContactChatter } | undefined,
): BoardModel {
  if (!fixture) return board;
  return {
    ...board,
    fixture_f: fixture.capacitance_f ?? board.fixture_f,
    ...(fixture.lead_inductance_h !== undefined ? { lead_h: fixture.lead_inductance_h } : {}),
    tank_k_per_v2: fixture.tank_voltage_coefficient_per_v2 ?? board.tank_k_per_v2,
    ...(fixture.chatter ? { contact_chatter: fixture.chatter } : {}),
  };
}
