// Open nulling: the capacitance of the clips and leads across the part. It sits in parallel with
// the part, adds to the tank's capacitance and lowers the ring, so a reading divided by a tank
// value that does not hold it reads high by C_fixture/C (2.5 % for 25 pF on the 1 nF tank).
//
// With the clips open nothing rings (the front end rings only through an inductor on the clips),
// so the fixture is found through a coil. One coil, rung on two tanks C1 < C2, gives the total
// capacitance in parallel that the tank values do not hold (the two-capacitance method,
// docs/method.md §7):
//   X = (f2² C2 − f1² C1) / (f1² − f2²)
// which is the coil's own Cs, the switch node and board strays, the tanks' own errors (as an offset
// a + b X, b = (C2 − C1)/(C2' − C1') for true values C'), plus the fixture when the coil is on the
// clips. Rung once on the board's own terminals and once on the clips at the end of the leads, on
// the same tanks and drives, everything but the fixture is the same in both, so
//   C_fixture = X_clips − X_terminals,
// independent of the coil's value and Cs, the leads' inductance (it only adds to L) and the
// timebase (only frequency ratios enter). Its uncertainty comes from the four fitted frequencies
// and the two tank values (through b), propagated by gum-propagation.ts. Pure core
// (fixtureFromRings) and the procedure on a tester (measureFixtureCapacitance).

import type { SettingPrediction } from "../ranging/predict.ts";
import type { DeviceClient } from "../device/client.ts";
import { measurePart, type Reading } from "../measure/measure-part.ts";
import { nominalTankU } from "../nominal-uncertainty.ts";
import { formatValue } from "../values/format-value.ts";
import type { AppliedCalibration } from "./applied.ts";
import type { PartEstimate } from "../ranging/estimate.ts";
import { CalibrationError } from "./errors.ts";
import { propagate } from "./gum-propagation.ts";
import { MAX_FIXTURE_F, type FixtureEntry } from "./profile-schema.ts";
import { MIN_TICKS_PER_PERIOD, estimateOf, fitRelUF0, meanWithU, readOnTank } from "./tank-reading.ts";

/** One coil's rings on the two tanks: mean frequency and its standard uncertainty. */
export interface RingPair {
  small: { f_hz: number; u_hz: number };
  large: { f_hz: number; u_hz: number };
}

export interface FixtureFromRings {
  c_f: number;
  /** Standard uncertainty of c_f. */
  u_f: number;
  /** Parallel capacitance the tank values do not hold, on the terminals and on the clips, F. */
  terminals_x_f: number;
  clips_x_f: number;
  /** The coil's inductance by the two-tank method on the terminals, and how much more it rings with on the clips (the leads), H. */
  coil_h: number;
  leads_h: number;
}

/** The two-capacitance pair for one placement: parallel capacitance X and inductance L. */
function xAndL(f1: number, f2: number, c1: number, c2: number): [number, number] {
  const a = f1 * f1;
  const b = f2 * f2;
  const x = (b * c2 - a * c1) / (a - b);
  const l = 1 / (4 * Math.PI ** 2 * a * (c1 + x));
  return [x, l];
}

/**
 * Pure core: the fixture's capacitance from the same coil's rings on tanks C1 < C2 on the
 * terminals and on the clips. `tanks` are the values the tanks were taken at with their standard
 * uncertainties. Refused when the rings did not move the way one coil moved onto the clips does
 * (NONSENSE_RESULT).
 */
export function fixtureFromRings(terminals: RingPair, clips: RingPair, tanks: { c1_f: number; u_c1_f: number; c2_f: number; u_c2_f: number }): FixtureFromRings {
  const model = (x: number[]) => {
    const [ta, tb, ca, cb, c1, c2] = x;
    const [xt, lt] = xAndL(ta, tb, c1, c2);
    const [xc, lc] = xAndL(ca, cb, c1, c2);
    return [xc - xt, xt, xc, lt, lc - lt];
  };
  const [cf, xt, xc, lt, dl] = propagate(model, [
    { name: "f on terminals, small tank", value: terminals.small.f_hz, u: terminals.small.u_hz },
    { name: "f on terminals, large tank", value: terminals.large.f_hz, u: terminals.large.u_hz },
    { name: "f on clips, small tank", value: clips.small.f_hz, u: clips.small.u_hz },
    { name: "f on clips, large tank", value: clips.large.f_hz, u: clips.large.u_hz },
    { name: "small tank", value: tanks.c1_f, u: tanks.u_c1_f },
    { name: "large tank", value: tanks.c2_f, u: tanks.u_c2_f },
  ]);
  if (!(Math.abs(cf.value) <= MAX_FIXTURE_F)) {
    throw new CalibrationError(
      "NONSENSE_RESULT",
      `the clips add ${formatValue(cf.value, "F", 3)} across the coil, more than clips and leads hold (at most ${formatValue(MAX_FIXTURE_F, "F", 2)}): nothing else may be on the clips or across the terminals, and the coil must be the same in both steps; measure again`,
    );
  }
  // The same coil on the clips rings with the leads in series: a little more inductance, never a different part.
  if (Math.abs(dl.value) > 0.05 * lt.value + 1e-6) {
    throw new CalibrationError(
      "NONSENSE_RESULT",
      `the coil reads ${formatValue(lt.value, "H", 4)} on the terminals but ${formatValue(lt.value + dl.value, "H", 4)} on the clips: not the same coil, or it moved or changed; keep one coil and measure again`,
    );
  }
  return { c_f: cf.value, u_f: cf.u, terminals_x_f: xt.value, clips_x_f: xc.value, coil_h: lt.value, leads_h: dl.value };
}

export type CoilPlace = "terminals" | "clips";

export interface FixtureNullingOptions {
  /** The two tanks (default: the smallest tank the coil rings usably on, and the next larger). */
  tanks?: [number, number];
  /** Rings per tank and placement (default 3). */
  repeats?: number;
  /** The tester's calibration; a stored fixture value in it is left out (this procedure replaces it). */
  calibration?: AppliedCalibration;
  onProgress?: (message: string) => void;
  /** Called with each pulse's prediction before it is made (the CLI's caution for a high ring). */
  onBeforePulse?: (p: SettingPrediction) => void;
  now?: Date;
}

export interface FixtureNullingResult extends FixtureFromRings {
  entry: FixtureEntry;
  tanks: [number, number];
  drives: [number, number];
  terminals: RingPair;
  clips: RingPair;
}

/** The smallest tank the coil rings on with enough timer ticks per period, and the next larger one. */
export function fixtureTanks(client: DeviceClient, first: Reading): [number, number] {
  const tanks = client.profile.tanks.slice().sort((a, b) => a.nominal_f - b.nominal_f);
  const c0 = client.profile.tanks[first.settings.tank].nominal_f;
  for (let i = 0; i + 1 < tanks.length; i++) {
    const f = first.analysis.f0_hz * Math.sqrt(c0 / tanks[i].nominal_f);
    if (client.profile.tick_hz / f >= MIN_TICKS_PER_PERIOD) return [tanks[i].index, tanks[i + 1].index];
  }
  throw new CalibrationError("TWO_TANKS_UNAVAILABLE", `the coil (${formatValue(first.analysis.inductance_h, "H", 3)}) rings usably on one tank only; use a coil of some 50 µH to 5 mH, which rings on the two smallest tanks`);
}

/**
 * Runs open nulling on the tester: `place("terminals")` is awaited before the coil is rung on
 * the board's own terminals, `place("clips")` before the same coil is rung on the clips (a prompt
 * on a real tester; the simulator moves its part). Same tanks, same drives in both steps.
 */
export async function measureFixtureCapacitance(client: DeviceClient, place: (where: CoilPlace) => Promise<void>, opts: FixtureNullingOptions = {}): Promise<FixtureNullingResult> {
  const repeats = opts.repeats ?? 3;
  const calibration = opts.calibration ? { ...opts.calibration, fixture: undefined } : undefined;
  const profile = client.profile;
  await place("terminals");
  let tanks = opts.tanks;
  let estimate: PartEstimate | undefined;
  if (!tanks) {
    const first = await measurePart(client, { calibration, onProgress: opts.onProgress, onBeforePulse: opts.onBeforePulse });
    estimate = estimateOf(client, first);
    tanks = fixtureTanks(client, first);
  }
  const [t1, t2] = profile.tanks[tanks[0]].nominal_f < profile.tanks[tanks[1]].nominal_f ? tanks : [tanks[1], tanks[0]];
  if (t1 === t2 || profile.tanks[t1] === undefined || profile.tanks[t2] === undefined) throw new RangeError(`"tanks" must be two different tank indices from 0 to ${profile.tanks.length - 1}`);
  const drives: [number | undefined, number | undefined] = [undefined, undefined];
  const capacitance: { c_f: number; u_f: number }[] = [];
  const series = async (tank: number, k: 0 | 1, where: CoilPlace) => {
    const f: number[] = [];
    const u: number[] = [];
    for (let i = 0; i < repeats; i++) {
      const r = await readOnTank(client, tank, { calibration, preferDrive: drives[k], onProgress: opts.onProgress, estimate, onBeforePulse: opts.onBeforePulse });
      drives[k] ??= r.settings.drive;
      estimate = estimateOf(client, r);
      capacitance[k] ??= { c_f: r.capture.tank_c_f, u_f: r.capture.tank_c_u_f ?? nominalTankU(r.capture.tank_c_f) };
      f.push(r.analysis.f0_hz);
      u.push(fitRelUF0(r) * r.analysis.f0_hz);
      opts.onProgress?.(`${where}: ring ${i + 1} of ${repeats} on the ${formatValue(profile.tanks[tank].nominal_f, "F", 3)} tank at ${formatValue(r.analysis.f0_hz, "Hz", 6)}`);
    }
    const m = meanWithU(f, u);
    return { f_hz: m.mean, u_hz: m.u };
  };
  const terminals: RingPair = { small: await series(t1, 0, "terminals"), large: await series(t2, 1, "terminals") };
  await place("clips");
  const clips: RingPair = { small: await series(t1, 0, "clips"), large: await series(t2, 1, "clips") };
  const out = fixtureFromRings(terminals, clips, { c1_f: capacitance[0].c_f, u_c1_f: capacitance[0].u_f, c2_f: capacitance[1].c_f, u_c2_f: capacitance[1].u_f });
  const entry: FixtureEntry = {
    c_f: out.c_f, u_f: out.u_f, method: "terminals-vs-clips", time: (opts.now ?? new Date()).toISOString(),
    detail: `a ${formatValue(out.coil_h, "H", 4)} coil on the ${formatValue(profile.tanks[t1].nominal_f, "F", 3)} and ${formatValue(profile.tanks[t2].nominal_f, "F", 3)} tanks, ` +
      `${repeats} rings each: ${formatValue(out.terminals_x_f, "F", 4)} in parallel on the terminals, ${formatValue(out.clips_x_f, "F", 4)} on the clips`,
  };
  return { ...out, entry, tanks: [t1, t2], drives: [drives[0]!, drives[1]!], terminals, clips };
}
