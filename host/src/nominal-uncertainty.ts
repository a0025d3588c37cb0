// The uncertainties henrytick assumes for a tester's parts until calibration measures them: one
// source for the analysis defaults, the ranging predictions and the capture record. The reference
// board's tolerances (docs/hardware.md), each taken as a rectangular distribution, so the
// standard uncertainty is the half-width over sqrt(3) (JCGM 100:2008 §4.3.7).

/** Tank capacitors, C0G/film: ±1 % of nominal. */
export const NOMINAL_TANK_TOLERANCE = 0.01;

/** Standard uncertainty of an uncalibrated tank of nominal value `c_f`, farads. */
export function nominalTankU(c_f: number): number {
  return (c_f * NOMINAL_TANK_TOLERANCE) / Math.sqrt(3);
}

/** The tester's crystal: ±50 ppm. */
export const NOMINAL_TIMEBASE_TOLERANCE_PPM = 50;

/** Standard relative uncertainty of an uncalibrated tick rate (50 ppm / sqrt(3)). */
export const NOMINAL_TIMEBASE_U_REL = 50e-6 / Math.sqrt(3);
