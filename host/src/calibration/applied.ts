// What a calibration hands a reading: the calibrated values, in the form a capture needs
// (measure/capture-build.ts applies them; apply-profile.ts makes them from a stored profile).

/**
 * What a calibration says about one tester, in the form a capture needs. The calibration
 * module produces it from a stored profile; any field left out keeps the nominal value.
 */
export interface AppliedCalibration {
  /**
   * Effective capacitance across the part for each tank index (tank + fixture), with its
   * standard uncertainty; `timebase_u_ppm` when that tank's calibration already absorbed the
   * timebase error (a reference-inductor calibration: only drift since then remains).
   */
  tanks?: ({ c_f: number; u_f: number; timebase_u_ppm?: number; fixture_included?: boolean } | undefined)[];
  /** Comparator thresholds referred to the ring, [rising, falling]. */
  thresholds_v?: [number, number];
  /** Timebase error: the timer really counts at tick_hz (1 + ppm 1e-6). */
  timebase_ppm?: number;
  /** Standard uncertainty of that error, ppm (uncalibrated: nominal-uncertainty.ts). */
  timebase_u_ppm?: number;
  /** The test leads' series inductance to subtract from every reading, with its standard uncertainty. */
  leads?: { l_h: number; u_h: number };
  /**
   * The fixture's capacitance across the part (open nulling), with its standard uncertainty: added
   * to a tank that is not calibrated, or whose entry says `fixture_included: false`.
   */
  fixture?: { c_f: number; u_f: number };
  /** The comparator's rise/fall delay skew and its standard uncertainty, seconds (skew-fit.ts). */
  comparator_skew?: { skew_s: number; u_s: number };
  /** Where it came from, for the capture's record (e.g. the profile's file and date). */
  source: string;
}
