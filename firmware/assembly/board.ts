// Profile of the reference front end (docs/hardware.md). A port for a different board replaces
// this file; the firmware reads nothing else about the hardware. Values are nominal: the
// host's calibration measures the real ones.

export const FIRMWARE_VERSION: string = "0.2.0";
export const PRODUCT: string = "henrytick";

/** Capture timer tick rate. 64 MHz gives 15.6 ns resolution and a 2^30-tick window of 16.7 s. */
export const TICK_HZ: i32 = 64000000;
export const TICKS_PER_US: i32 = 64;
export const TICKS_PER_MS: i32 = 64000;

/** USB supply feeding the drive resistors, and the flyback clamp's conduction voltage. */
export const SUPPLY_MV: i32 = 5000;
export const CLAMP_MV: i32 = 36000;

/**
 * Drive resistors: value in milliohms, continuous power rating in mW, single-pulse energy rating
 * in µJ, thermal time constant in µs. The firmware derives each resistor's charge-time limit and
 * the rest between pulses from these (interlocks.ts), assuming the worst case: the whole supply
 * across the resistor (a shorted part).
 *
 * The rest follows the resistor makers' rule for repeated pulses: a pulse on a resistor that is
 * already warm counts as more energy the closer its mean dissipation is to the continuous rating
 * (E_equivalent = E / (1 - P_mean / P_rated), which must stay within the single-pulse rating,
 * with P_mean <= P_rated; Vishay Sfernice DTO25 datasheet, doc. 51054, "Repetitive or superimposed
 * pulses"). The firmware tracks that mean as a first-order thermal model, the heat in the resistor
 * decaying with the time constant below.
 *
 * The ratings are those of the parts listed in docs/hardware.md. The time constants are not
 * datasheet figures (bench practice): each is the single-pulse rating over the continuous one,
 * the time constant of a one-node model that meets both ratings at once (from cold it takes one
 * rated pulse; pulse after pulse it holds the continuous rating). A longer one would let a burst
 * of pulses count as one long pulse beyond the single-pulse rating.
 */
export const DRIVE_COUNT: i32 = 4;
export const DRIVE_MILLIOHM: StaticArray<i32> = [10000, 100000, 1000000, 10000000];
export const DRIVE_POWER_MW: StaticArray<i32> = [1000, 500, 250, 250];
// 10 ohm at 5 V dissipates 2.5 W: 5 mJ allows 2 ms; 100 ohm dissipates 0.25 W: 20 ms. The larger
// resistors dissipate little and reach MAX_CHARGE_US, which bounds how long the switch is ever closed.
export const DRIVE_ENERGY_UJ: StaticArray<i32> = [5000, 5000, 2500, 250];
export const DRIVE_TAU_US: StaticArray<i32> = [5000, 10000, 10000, 1000];
/** Longest charge time on any resistor: keeps the flyback energy and the wait bounded. */
export const MAX_CHARGE_US: i32 = 100000;

/** Tank capacitors (C0G / film), nominal, in picofarads. */
export const TANK_COUNT: i32 = 4;
export const TANK_PF: StaticArray<i32> = [1000, 10000, 100000, 1000000];

/** Comparator thresholds referred to the ring voltage, in microvolts (deliberately offset). */
export const THRESHOLD_RISING_UV: i32 = 35000;
export const THRESHOLD_FALLING_UV: i32 = -5000;

/**
 * Comparator timing beyond the thresholds, referred to the ring like them (docs/hardware.md,
 * "Comparator timing in the profile"); the host's analysis corrects edge times with them
 * (docs/method.md §2a). Nominal design values of the reference board:
 * - input noise: rms and first-order bandwidth of the noise the comparator decides on (its own
 *   input noise and the divider's, times the 4:1 divider);
 * - propagation delays of a low->high and a high->low output at large overdrive, and the standard
 *   uncertainty of their difference (the skew; calibration measures it);
 * - overdrive charge: the integrated overdrive, in femtovolt-seconds, after which the input stage
 *   switches (a ramp of slope S is sqrt(2 q / S) late).
 */
export const COMPARATOR_NOISE_UV: i32 = 600;
export const COMPARATOR_NOISE_BW_KHZ: i32 = 2000;
export const COMPARATOR_DELAY_RISE_PS: i32 = 45000;
export const COMPARATOR_DELAY_FALL_PS: i32 = 45000;
export const COMPARATOR_SKEW_U_PS: i32 = 20000;
export const COMPARATOR_OVERDRIVE_FVS: i32 = 2000;

/** Edge buffer size, timing limits. */
export const BUFFER_EDGES: i32 = 8192;
export const MAX_TIMEOUT_MS: i32 = 5000;
export const SETTLE_US: i32 = 500;

/** Self-test: how long the capture path listens with the switch open. */
export const SELF_TEST_US: i32 = 20000;
