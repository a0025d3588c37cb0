// Profile of the reference front end (docs/hardware.md). A port for a different board replaces
// this file; the firmware reads nothing else about the hardware. Values are nominal: the
// host's calibration measures the real ones.

export const FIRMWARE_VERSION: string = "0.1.0";
export const PRODUCT: string = "henrytick";

/** Capture timer tick rate. 64 MHz gives 15.6 ns resolution and a 2^30-tick window of 16.7 s. */
export const TICK_HZ: i32 = 64000000;
export const TICKS_PER_US: i32 = 64;
export const TICKS_PER_MS: i32 = 64000;

/** USB supply feeding the drive resistors, and the flyback clamp's conduction voltage. */
export const SUPPLY_MV: i32 = 5000;
export const CLAMP_MV: i32 = 36000;

/** Drive resistors in milliohms, their pulse power ratings in mW, and the charge-time interlock. */
export const DRIVE_COUNT: i32 = 4;
export const DRIVE_MILLIOHM: StaticArray<i32> = [10000, 100000, 1000000, 10000000];
export const DRIVE_POWER_MW: StaticArray<i32> = [1000, 500, 250, 250];
// Charge-time limit: a 5 V pulse's energy into the resistor kept within its pulse rating
// (10 ohm: 2.5 W for 2 ms = 5 mJ). The larger resistors dissipate little; 100 ms bounds the wait.
export const DRIVE_MAX_CHARGE_US: StaticArray<i32> = [2000, 20000, 100000, 100000];

/** Tank capacitors (C0G / film), nominal, in picofarads. */
export const TANK_COUNT: i32 = 4;
export const TANK_PF: StaticArray<i32> = [1000, 10000, 100000, 1000000];

/** Comparator thresholds referred to the ring voltage, in microvolts (deliberately offset). */
export const THRESHOLD_RISING_UV: i32 = 35000;
export const THRESHOLD_FALLING_UV: i32 = -5000;

/** Edge buffer size, timing limits. */
export const BUFFER_EDGES: i32 = 8192;
export const MIN_REST_MS: i32 = 20;
/** The rest after a pulse is also at least this many times its charge time (duty-cycle limit). */
export const REST_PER_CHARGE: i32 = 10;
export const MAX_TIMEOUT_MS: i32 = 5000;
export const SETTLE_US: i32 = 500;
