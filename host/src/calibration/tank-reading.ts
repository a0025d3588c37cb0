// One reading of the part on a chosen tank, for procedures that need a particular tank (or two).
// The drive is chosen here, not by ranging: the one ranging picked for the part first, then
// weaker ones, then stronger ones; measurePart's own checks refuse any setting over a limit
// (SETTING_UNSAFE) before it is pulsed, and such refusals simply move on to the next drive.

import type { SettingPrediction } from "../ranging/predict.ts";
import { ErrorCode, NO_USABLE_RING } from "../codes.ts";
import type { DeviceClient } from "../device/client.ts";
import type { AppliedCalibration } from "./applied.ts";
import type { Reading } from "../measure/measure-part.ts";
import { MeasureError, measurePart } from "../measure/measure-part.ts";
import type { PartEstimate } from "../ranging/estimate.ts";
import { estimateFromReading } from "../ranging/estimate.ts";
import { CalibrationError } from "./errors.ts";

export interface TankReadingOptions {
  calibration?: AppliedCalibration;
  /** Drive to try first (usually the one auto-ranging chose for this part). */
  preferDrive?: number;
  label?: string;
  onProgress?: (message: string) => void;
  /** What an earlier reading of this part said; without it every setting is probed first. */
  estimate?: PartEstimate;
  /** Called with each pulse's prediction before it is made (the CLI's caution for a high ring). */
  onBeforePulse?: (p: SettingPrediction) => void;
}

/** The estimate a reading gives ranging, so later fixed settings skip the probe. */
export function estimateOf(client: DeviceClient, r: Reading): PartEstimate {
  return estimateFromReading(client.profile, r.settings, r.analysis);
}

/** Fewest edges a calibration reading should rest on. */
export const MIN_CAL_EDGES = 20;
/** Fewest timer ticks per period for a sound fit (the ranging floor). */
export const MIN_TICKS_PER_PERIOD = 40;

/** Errors that mean "this drive does not suit the part on this tank", so try another. */
const NEXT_DRIVE = new Set<ErrorCode>([ErrorCode.SETTING_UNSAFE, ErrorCode.CHARGE_LIMIT, ErrorCode.PEAK_LIMIT, ...NO_USABLE_RING]);

export function driveOrder(client: DeviceClient, prefer?: number): number[] {
  const byOhm = client.profile.drives.map((d) => d.index).sort((a, b) => client.profile.drives[a].ohm - client.profile.drives[b].ohm);
  if (prefer === undefined) return byOhm.slice().reverse();
  const pos = byOhm.indexOf(prefer);
  return [prefer, ...byOhm.slice(pos + 1), ...byOhm.slice(0, pos).reverse()];
}

export async function readOnTank(client: DeviceClient, tank: number, opts: TankReadingOptions = {}): Promise<Reading> {
  let last: unknown = null;
  for (const drive of driveOrder(client, opts.preferDrive)) {
    try {
      const r = await measurePart(client, { drive, tank, calibration: opts.calibration, label: opts.label, onProgress: opts.onProgress, estimate: opts.estimate, onBeforePulse: opts.onBeforePulse });
      if (r.analysis.edges_used >= MIN_CAL_EDGES) return r;
      last = new MeasureError("TOO_FEW_EDGES", `only ${r.analysis.edges_used} edges`);
    } catch (e) {
      if (!(e instanceof MeasureError) || !NEXT_DRIVE.has(e.code)) throw e;
      last = e;
    }
  }
  const why = last instanceof Error ? last.message : "no drive gave a usable ring";
  throw new CalibrationError("OUT_OF_SPAN", `the part gives no usable ring on tank ${tank} (${why}); use a part that suits this tank or leave the tank out`);
}

/** Standard relative uncertainty of f0 from the fit alone (the analysis lists 2 u(f)/f for L). */
export function fitRelUF0(r: Reading): number {
  return (r.analysis.budget.find((b) => b.name === "fit")?.rel_u ?? 0) / 2;
}

/** Mean and standard uncertainty of the mean from repeat values and their own standard uncertainties. */
export function meanWithU(values: number[], u_each: number[]): { mean: number; u: number } {
  const n = values.length;
  const mean = values.reduce((a, b) => a + b, 0) / n;
  const rms = Math.sqrt(u_each.reduce((a, b) => a + b * b, 0) / n);
  const sd = n > 1 ? Math.sqrt(values.reduce((a, v) => a + (v - mean) ** 2, 0) / (n - 1)) : 0;
  // Type A from the scatter when it is larger than the fit's own figure (JCGM 100:2008 §4.2);
  // with few repeats the scatter alone is a poor estimate, so the fit's figure is the floor.
  return { mean, u: Math.max(rms, sd) / Math.sqrt(n) };
}
