// Continuous reading: a short history of values, a one-line trend (sparkline) and a stability
// verdict. "steady" means the last few readings agree within their expanded uncertainty;
// "drifting" means they move one way by more than that (a part warming up, a core settling);
// anything else is "unsteady" (a loose clip, a hand near the coil). Common bench practice, no
// source. Pure: no I/O.

export type Stability = "gathering" | "steady" | "drifting" | "unsteady";

const BARS = "▁▂▃▄▅▆▇█";

/**
 * One character per value, scaled between the smallest and largest; when they are all within
 * `flat_span` of each other the line stays flat in the middle, so noise far below the
 * uncertainty does not look like a trend.
 */
export function sparkline(values: readonly number[], flat_span = 0): string {
  if (values.length === 0) return "";
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values) {
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  const span = hi - lo;
  if (!(span > flat_span) || span === 0) return BARS[3].repeat(values.length);
  return values.map((v) => BARS[Math.min(BARS.length - 1, Math.floor(((v - lo) / span) * BARS.length))]).join("");
}

export interface StabilityResult {
  state: Stability;
  /** Largest minus smallest of the window. */
  range: number;
  /** Least-squares change per reading over the window. */
  slope_per_reading: number;
  window: number;
}

/** Verdict over the last `window` readings (default 5), each with expanded uncertainty U. */
export function assessStability(values: readonly number[], u_expanded: readonly number[], window = 5): StabilityResult {
  const n = Math.min(window, values.length);
  if (n < 3) return { state: "gathering", range: NaN, slope_per_reading: NaN, window: n };
  const v = values.slice(-n);
  const u = u_expanded.slice(-n).slice().sort((a, b) => a - b);
  const U = u[Math.floor(u.length / 2)];
  const range = Math.max(...v) - Math.min(...v);
  const xm = (n - 1) / 2;
  const ym = v.reduce((s, y) => s + y, 0) / n;
  let sxy = 0;
  let sxx = 0;
  v.forEach((y, i) => {
    sxy += (i - xm) * (y - ym);
    sxx += (i - xm) * (i - xm);
  });
  const slope = sxy / sxx;
  let state: Stability;
  if (range <= U) state = "steady";
  else if (Math.abs(slope * (n - 1)) >= 0.8 * range) state = "drifting";
  else state = "unsteady";
  return { state, range, slope_per_reading: slope, window: n };
}

/** Keeps the last `size` entries. */
export class History {
  readonly values: number[] = [];
  readonly u: number[] = [];
  constructor(private readonly size = 40) {}
  push(value: number, u_expanded: number): void {
    this.values.push(value);
    this.u.push(u_expanded);
    if (this.values.length > this.size) {
      this.values.shift();
      this.u.shift();
    }
  }
  clear(): void {
    this.values.length = 0;
    this.u.length = 0;
  }
}

/**
 * A history of readings on one setting: Q, ESR and the self-capacitance's share of L depend on
 * the tank, so a verdict never spans a change of setting. A reading on another setting than the
 * last starts the history again.
 */
export class SettingHistory extends History {
  private setting: string | null = null;
  /** Adds a reading taken on `setting`; true when the history started again for it (another setting than the last). */
  pushOn(setting: string, value: number, u_expanded: number): boolean {
    const restarted = this.setting !== null && this.setting !== setting;
    if (restarted) this.clear();
    this.setting = setting;
    this.push(value, u_expanded);
    return restarted;
  }
}
