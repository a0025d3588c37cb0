// Up-front checks of a RingInput: every number the analysis relies on is checked here, so that a
// bad capture fails with a stable code and advice instead of turning into a plausible number.

import { NOMINAL_TIMEBASE_U_REL, nominalTankU } from "../nominal-uncertainty.ts";
import { AnalysisError, type RingInput } from "./types.ts";

/**
 * More edges than any capture holds (eight times the reference board's 8 192-edge buffer, the
 * capture file's own limit): a corrupt length rather than a ring. The analysis takes about 0.8 s
 * and 120 MB for this many.
 */
export const MAX_EDGES = 65_536;
/** Fewest edges the four-parameter edge model can be fitted to with a residual check. */
export const MIN_EDGES = 6;

export interface CheckedInput {
  t_s: Float64Array;
  rising: Uint8Array;
  tick_s: number;
  vh_v: number;
  vl_v: number;
  c_f: number;
  c_u_f: number;
  timebase_u_rel: number;
  ring_ended: boolean;
}

export function checkInput(input: RingInput): CheckedInput {
  if (input === null || typeof input !== "object") bad("input is not an object; pass a RingInput");
  const { tick_hz, ticks, levels, tank_c_f, thresholds_v } = input;
  if (!(Number.isFinite(tick_hz) && tick_hz > 0)) bad(`tick_hz must be a positive finite number (got ${tick_hz}); check the device's timer rate`);
  if (!(Number.isFinite(tank_c_f) && tank_c_f > 0)) bad(`tank_c_f must be a positive finite capacitance in farads (got ${tank_c_f}); check the range's calibration`);
  if (!ticks || typeof ticks.length !== "number" || !levels || typeof levels.length !== "number") {
    bad("ticks and levels must be arrays; pass the capture's edge lists");
  }
  if (!Array.isArray(thresholds_v) || thresholds_v.length !== 2) bad("thresholds_v must be [rising, falling] in volts");
  const [vh, vl] = thresholds_v;
  if (!(Number.isFinite(vh) && Number.isFinite(vl))) bad("thresholds_v must be finite volts; check the threshold calibration");
  if (!(vh > vl)) bad(`the rising threshold (${vh} V) must be above the falling one (${vl} V); check their order`);
  if (!(vh > 0 || vl < 0)) bad("at least one threshold must lie away from zero on the side of its edge; check the threshold calibration");
  const c_u_f = input.tank_c_u_f ?? nominalTankU(tank_c_f);
  if (!(Number.isFinite(c_u_f) && c_u_f >= 0)) bad("tank_c_u_f must be a finite, non-negative capacitance in farads");
  const tb = input.timebase_u_rel ?? NOMINAL_TIMEBASE_U_REL;
  if (!(Number.isFinite(tb) && tb >= 0 && tb < 0.1)) bad("timebase_u_rel must be a finite relative uncertainty below 0.1");
  const n = ticks.length;
  if (levels.length !== n) bad(`ticks (${n}) and levels (${levels.length}) differ in length; the capture is corrupt, re-read it`);
  if (n > MAX_EDGES) bad(`${n} edges is more than any capture holds (max ${MAX_EDGES}); the capture is corrupt, re-read it`);
  if (n === 0) throw new AnalysisError("EMPTY_CAPTURE", "the capture holds no edges: check that the part is connected and the drive current and thresholds suit it, then measure again");
  const t_s = new Float64Array(n);
  const rising = new Uint8Array(n);
  const tick_s = 1 / tick_hz;
  let prev = 0;
  for (let i = 0; i < n; i++) {
    const k = ticks[i];
    const lv = levels[i];
    if (!Number.isSafeInteger(k) || k < 0) bad(`tick ${i} is ${k}, not a non-negative integer; the capture is corrupt, re-read it`);
    if (k < prev) bad(`ticks decrease at edge ${i} (${prev} then ${k}); the capture is corrupt or wrapped, re-read it`);
    if (lv !== 0 && lv !== 1) bad(`level ${i} is ${lv}, not 0 or 1; the capture is corrupt, re-read it`);
    prev = k;
    // Mid-tick: a timer that truncates reports n for a true time in [n, n+1) ticks.
    t_s[i] = (k + 0.5) * tick_s;
    rising[i] = lv;
  }
  if (n < MIN_EDGES) {
    throw new AnalysisError("TOO_FEW_EDGES", `only ${n} edge(s) captured, at least ${MIN_EDGES} are needed: raise the drive current or lower the thresholds so the ring lasts longer`);
  }
  if (input.ring_ended !== undefined && typeof input.ring_ended !== "boolean") bad("ring_ended must be true, false or absent");
  return { t_s, rising, tick_s, vh_v: vh, vl_v: vl, c_f: tank_c_f, c_u_f, timebase_u_rel: tb, ring_ended: input.ring_ended === true };
}

function bad(message: string): never {
  throw new AnalysisError("BAD_INPUT", message);
}
