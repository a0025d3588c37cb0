// The simulated tester's board: the physical values its front end is simulated with. A board
// file (board-profile.ts, shared-protocol/boards/NAME.json) gives the nominal values its firmware
// reports and one simulated unit of it: the "actual" values of that unit's parts, inside their
// tolerances (resistors ±1 %, tank capacitors ±1 % C0G / film). The difference is what
// calibration measures.

import type { ComparatorModel, TimerModel } from "./comparator-edges.ts";
import type { ContactChatter } from "./fixture-chatter.ts";
import { BoardProfileError, boardProfile, REFERENCE_BOARD, type BoardProfile } from "./board-profile.ts";

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

/**
 * A board with every part exactly at its nominal value (the reference board's by default): no
 * fixture, switch node or divider loading, an ideal diode, and fixed comparator and timer timing;
 * the id of the board file's simulated unit (HT-5EED0001 when it has none).
 */
export function nominalBoard(profile: BoardProfile = boardProfile(REFERENCE_BOARD)): BoardModel {
  return {
    supply_v: profile.supply_v,
    drive_ohm: profile.drives.map((d) => d.ohm),
    tank_f: profile.tanks.map((t) => t.nominal_f),
    fixture_f: 0,
    switch_node_f: 0,
    sense_ohm: Infinity,
    switch_on_ohm: 0.05,
    diode_v: 0,
    clamp_v: profile.clamp_v,
    clamp_ohm: 1,
    tank_k_per_v2: 0,
    comparator: { rising_v: profile.thresholds_v[0], falling_v: profile.thresholds_v[1], jitter_s: 4e-9, noise_v: 0.5e-3, delay_rise_s: 60e-9, delay_fall_s: 60e-9 },
    timer: { tick_hz: profile.tick_hz, ppm: 0, dead_time_s: 40e-9 },
    device_id: profile.simulated_unit?.device_id ?? 0x5eed0001,
  };
}

/**
 * The simulated unit a board file describes: its parts' actual values, the nominal supply,
 * clamp, thresholds (moved by the comparator's offset) and tick rate. Throws BoardProfileError
 * (NO_SIMULATED_UNIT) for a board file without one.
 */
export function simulatedBoard(profile: BoardProfile): BoardModel {
  const u = profile.simulated_unit;
  if (!u) throw new BoardProfileError("NO_SIMULATED_UNIT", `board "${profile.name}" describes no simulated unit; add "simulated_unit" to its board file (shared-protocol/boards/board.schema.json)`);
  return {
    supply_v: profile.supply_v,
    drive_ohm: [...u.drive_ohm],
    tank_f: [...u.tank_f],
    fixture_f: u.fixture_f,
    switch_node_f: u.switch_node_f,
    sense_ohm: u.sense_ohm,
    switch_on_ohm: u.switch_on_ohm,
    diode_v: u.diode_v,
    clamp_v: profile.clamp_v,
    clamp_ohm: u.clamp_ohm,
    tank_k_per_v2: u.tank_k_per_v2,
    comparator: { rising_v: profile.thresholds_v[0], falling_v: profile.thresholds_v[1], ...u.comparator },
    timer: { tick_hz: profile.tick_hz, ...u.timer },
    device_id: u.device_id,
  };
}

/** The simulated tester's default board: the reference board's simulated unit, one plausible unit off the line. */
export function referenceBoard(): BoardModel {
  return simulatedBoard(boardProfile(REFERENCE_BOARD));
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
