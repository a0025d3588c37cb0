// Calibration with a known capacitor clipped in parallel, no reference inductor needed. The same
// part rings on the same tank without and with the capacitor Ca:
//   1/wa^2 = L (C + Cs),  1/wb^2 = L (C + Cs + Ca)  =>  C + Cs = Ca wb^2 / (wa^2 - wb^2).
// Only the ratio of the two frequencies enters, so the timebase cancels; the part's own Cs
// lands in the result unless the user states it (a low-Cs coil on a large tank keeps it small).

import type { SettingPrediction } from "../ranging/predict.ts";
import type { DeviceClient } from "../device/client.ts";
import type { AppliedCalibration } from "./applied.ts";
import { CalibrationError } from "./errors.ts";
import { propagate } from "./gum-propagation.ts";
import type { TankEntry } from "./profile-schema.ts";
import type { PartEstimate } from "../ranging/estimate.ts";
import { formatValue } from "../values/format-value.ts";
import { estimateOf, fitRelUF0, meanWithU, readOnTank } from "./tank-reading.ts";

export interface ParallelCapacitor {
  capacitance_f: number;
  /** Standard uncertainty of the added capacitor's value. */
  u_capacitance_f: number;
  /** The part's self-capacitance if known (default 0) and its uncertainty. */
  part_self_capacitance_f?: number;
  u_part_self_capacitance_f?: number;
}

export interface ParallelResult {
  tank: number;
  c_f: number;
  u_f: number;
  /** The part's inductance, a by-product: 1/(wa^2 (C + Cs)). */
  part_inductance_h: number;
  fa_hz: number;
  fb_hz: number;
}

/** Smallest added capacitance, as a fraction of the tank, whose frequency shift still resolves C well. */
export const MIN_ADDED_RATIO = 0.05;

/**
 * What can be refused before any pulse: a capacitor without a positive value, or too small a
 * part of the tank to move the ring measurably (OUT_OF_SPAN).
 */
export function checkParallelCapacitor(tank: number, nominal_f: number, cap: ParallelCapacitor): void {
  if (!(cap.capacitance_f > 0) || !(cap.u_capacitance_f >= 0)) {
    throw new CalibrationError("BAD_REFERENCE", `the added capacitor must have a positive value and a non-negative uncertainty, got ${formatValue(cap.capacitance_f, "F")} ± ${formatValue(cap.u_capacitance_f, "F")}`);
  }
  if (cap.capacitance_f < MIN_ADDED_RATIO * nominal_f) {
    throw new CalibrationError("OUT_OF_SPAN", `the added ${formatValue(cap.capacitance_f, "F")} is under ${MIN_ADDED_RATIO * 100} % of tank ${tank} (${formatValue(nominal_f, "F")}): the shift is too small to resolve; use a capacitor of 30-300 % of the tank (${formatValue(0.3 * nominal_f, "F", 3)} to ${formatValue(3 * nominal_f, "F", 3)})`);
  }
}

/** Pure core: C from the two frequencies (each with its fit's standard uncertainty). */
export function tankFromParallel(
  tank: number, nominal_f: number, fa: { f_hz: number; u_hz: number }, fb: { f_hz: number; u_hz: number }, cap: ParallelCapacitor,
): ParallelResult {
  checkParallelCapacitor(tank, nominal_f, cap);
  if (!(fb.f_hz < fa.f_hz)) {
    throw new CalibrationError("NONSENSE_RESULT", `the ring with the capacitor (${formatValue(fb.f_hz, "Hz", 7)}) is not lower than without it (${formatValue(fa.f_hz, "Hz", 7)}): it was not connected, or the readings are swapped; measure again`);
  }
  const model = (x: number[]) => {
    const [a, b, ca, cs] = x;
    const total = (ca * b * b) / (a * a - b * b);
    return [total - cs, 1 / ((2 * Math.PI * a) ** 2 * total)];
  };
  const [c, l] = propagate(model, [
    { name: "f without", value: fa.f_hz, u: fa.u_hz },
    { name: "f with", value: fb.f_hz, u: fb.u_hz },
    { name: "added capacitor", value: cap.capacitance_f, u: cap.u_capacitance_f },
    { name: "part Cs", value: cap.part_self_capacitance_f ?? 0, u: cap.u_part_self_capacitance_f ?? 0 },
  ]);
  if (!(c.value > 0)) throw new CalibrationError("NONSENSE_RESULT", `tank ${tank}: the readings give a negative capacitance (${formatValue(c.value, "F")}); check the capacitor's value and measure again`);
  if (c.value < 0.5 * nominal_f || c.value > 2 * nominal_f) {
    throw new CalibrationError("NONSENSE_RESULT", `tank ${tank}: the readings give ${formatValue(c.value, "F")} against a nominal ${formatValue(nominal_f, "F")}; the capacitor's value (or its unit) is probably wrong`);
  }
  return { tank, c_f: c.value, u_f: c.u, part_inductance_h: l.value, fa_hz: fa.f_hz, fb_hz: fb.f_hz };
}

export interface ParallelOptions {
  repeats?: number;
  calibration?: AppliedCalibration;
  timebase_ppm?: number;
  onProgress?: (message: string) => void;
  /** Called with each pulse's prediction before it is made (the CLI's caution for a high ring). */
  onBeforePulse?: (p: SettingPrediction) => void;
  now?: () => Date;
}

/**
 * Runs the procedure: the part on the clips, `connect` is awaited between the readings
 * without and with the capacitor (a prompt on a real tester; the simulator adds it to the part).
 */
export async function calibrateWithParallelCapacitor(
  client: DeviceClient, tank: number, cap: ParallelCapacitor, connect: () => Promise<void>, opts: ParallelOptions = {},
): Promise<{ entry: TankEntry; result: ParallelResult }> {
  const nominal = client.profile.tanks[tank]?.nominal_f;
  if (nominal === undefined) throw new RangeError(`tank ${tank} does not exist on this tester (0..${client.profile.tanks.length - 1})`);
  checkParallelCapacitor(tank, nominal, cap);
  const base: AppliedCalibration | undefined = opts.calibration ? { ...opts.calibration, tanks: undefined, fixture: undefined } : undefined;
  const n = opts.repeats ?? 3;
  // The capacitor changes the part's ring, so each series learns its own estimate.
  const series = async (prefer?: number) => {
    const f: number[] = [];
    const u: number[] = [];
    let drive = prefer;
    let estimate: PartEstimate | undefined;
    for (let k = 0; k < n; k++) {
      const r = await readOnTank(client, tank, { calibration: base, preferDrive: drive, onProgress: opts.onProgress, estimate, onBeforePulse: opts.onBeforePulse });
      drive = r.settings.drive;
      estimate = estimateOf(client, r);
      f.push(r.analysis.f0_hz);
      u.push(fitRelUF0(r) * r.analysis.f0_hz);
    }
    const m = meanWithU(f, u);
    return { f_hz: m.mean, u_hz: m.u, drive };
  };
  const a = await series();
  await connect();
  const b = await series(a.drive);
  const result = tankFromParallel(tank, nominal, a, b, cap);
  const entry: TankEntry = {
    index: tank, nominal_f: nominal, c_f: result.c_f, u_f: result.u_f, shared_u_rel: 0, timebase_ppm: opts.timebase_ppm ?? 0, drive: a.drive,
    fixture_included: true, method: "parallel-capacitor", time: (opts.now ?? (() => new Date()))().toISOString(),
    detail: `added ${formatValue(cap.capacitance_f, "F", 6)} ± ${formatValue(cap.u_capacitance_f, "F", 3)} (k = 1), part Cs ${formatValue(cap.part_self_capacitance_f ?? 0, "F", 3)}; ${formatValue(a.f_hz, "Hz", 7)} -> ${formatValue(b.f_hz, "Hz", 7)}`,
  };
  return { entry, result };
}
