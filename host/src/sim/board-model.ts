// Physical values of the simulated reference front end (docs/hardware.md). These are the
// "actual" component values the simulated circuit uses; the firmware's board profile carries
// the nominal ones. v0 keeps actual = nominal and no fixture capacitance; the calibration work
// makes them differ.

import type { ComparatorModel, TimerModel } from "./comparator-edges.ts";

export interface BoardModel {
  supply_v: number;
  /** Drive resistors, ohms, indexed as in the firmware profile. */
  drive_ohm: number[];
  /** Tank capacitors, farads, indexed as in the firmware profile. */
  tank_f: number[];
  /** Capacitance of the test clips and wiring in parallel with the tank, farads. */
  fixture_f: number;
  /** Low-side switch on-resistance, ohms. */
  switch_on_ohm: number;
  /** Flyback clamp voltage: the ring is not simulated past it (v0 flags it instead). */
  clamp_v: number;
  comparator: ComparatorModel;
  timer: TimerModel;
  device_id: number;
}

export function referenceBoard(): BoardModel {
  return {
    supply_v: 5.0,
    drive_ohm: [10, 100, 1000, 10000],
    tank_f: [1e-9, 10e-9, 100e-9, 1e-6],
    fixture_f: 0,
    switch_on_ohm: 0.05,
    clamp_v: 36,
    comparator: { rising_v: 0.035, falling_v: -0.005, jitter_s: 4e-9, noise_v: 0.5e-3, delay_s: 60e-9 },
    timer: { tick_hz: 64e6, ppm: 0, dead_time_s: 40e-9 },
    device_id: 0x5eed0001,
  };
}
