// An independent reference for the comparator's first passage: the plainest simulation of the
// same process, sharing no code with host/src/sim. A waveform v(t) (a linear ramp, or a ring
// written out by the test) plus a stationary Ornstein-Uhlenbeck noise (rms sigma, time constant
// tau), advanced with exact OU steps of length h and checked against the threshold only at the
// grid points (no bridge correction, no adaptive steps). One noise path on the finest grid serves all four
// grids (h, h/4, h/16, h/64: every 64th, 16th, 4th and every point), so the differences between
// them carry little Monte Carlo noise. Discrete checking misses excursions between the points,
// so each grid's first passage comes late by about beta sqrt(D h) / S for a fast ramp (D = 2
// sigma^2 / tau, beta = 0.5826: M. Broadie, P. Glasserman and S. Kou, "A continuity correction
// for discrete barrier options", Mathematical Finance 7(4), 1997; value from memory), an error
// that shrinks like sqrt(h).

/** Own generator (32-bit xorshift-multiply, "mulberry32") and Box-Muller normals. */
class Gen {
  private s: number;
  private spare = NaN;
  constructor(seed: number) {
    this.s = seed >>> 0;
  }
  uniform(): number {
    let t = (this.s = (this.s + 0x6d2b79f5) >>> 0);
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  }
  normal(): number {
    if (!Number.isNaN(this.spare)) {
      const x = this.spare;
      this.spare = NaN;
      return x;
    }
    const u = 1 - this.uniform();
    const r = Math.sqrt(-2 * Math.log(u));
    const a = 2 * Math.PI * this.uniform();
    this.spare = r * Math.sin(a);
    return r * Math.cos(a);
  }
}

export interface GridResult {
  /** Grid step, seconds. */
  h_s: number;
  /** Mean and standard deviation of the first-passage time minus the ramp's crossing, seconds. */
  mean_s: number;
  sd_s: number;
}

export interface BruteForceResult {
  /** Coarsest first: h, h/4, h/16, h/64. */
  grids: GridResult[];
  /** Per trial first-passage times on each grid (same order), seconds. */
  times_s: Float64Array[];
}

/**
 * First time v(t) + n(t) >= threshold_v from t = start_s on, the noise starting stationary;
 * `trials` paths on grids h, h/4, h/16, h/64. Times are reported relative to `origin_s`.
 */
export function bruteForceFirstPassage(opts: {
  v: (t_s: number) => number; threshold_v: number; start_s: number; origin_s: number;
  /** A path that has not crossed by then is reported at end_s (default: run until it crosses). */
  end_s?: number;
  sigma_v: number; tau_s: number; h_s: number; trials: number; seed: number;
}): BruteForceResult {
  const { v, threshold_v: th, sigma_v: sigma, tau_s: tau, trials } = opts;
  const fine = opts.h_s / 64;
  const rho = Math.exp(-fine / tau);
  const kick = sigma * Math.sqrt(1 - rho * rho);
  const gen = new Gen(opts.seed);
  const strides = [64, 16, 4, 1];
  const times = strides.map(() => new Float64Array(trials));
  for (let k = 0; k < trials; k++) {
    let n = sigma * gen.normal();
    let pending = strides.length;
    const done = [false, false, false, false];
    for (let i = 0; pending > 0; i++) {
      if (i > 0) n = rho * n + kick * gen.normal();
      const t = opts.start_s + i * fine;
      if (v(t) + n < th && t < (opts.end_s ?? Infinity)) continue;
      for (let g = 0; g < strides.length; g++) {
        if (!done[g] && i % strides[g] === 0) {
          done[g] = true;
          times[g][k] = t - opts.origin_s;
          pending--;
        }
      }
    }
  }
  const grids = strides.map((st, g) => {
    const x = times[g];
    let m = 0;
    for (const v of x) m += v;
    m /= trials;
    let ss = 0;
    for (const v of x) ss += (v - m) ** 2;
    return { h_s: fine * st, mean_s: m, sd_s: Math.sqrt(ss / (trials - 1)) };
  });
  return { grids, times_s: times };
}

/** First passage of a linear ramp S t across 0, from lead_s before its crossing. */
export function bruteForceRamp(opts: { slope_v_s: number; sigma_v: number; tau_s: number; h_s: number; lead_s: number; trials: number; seed: number }): BruteForceResult {
  const S = opts.slope_v_s;
  return bruteForceFirstPassage({ ...opts, v: (t) => S * t, threshold_v: 0, start_s: -opts.lead_s, origin_s: 0 });
}

/** Mean, standard error and standard deviation. */
export function meanOf(x: ArrayLike<number>): { mean: number; sem: number; sd: number } {
  const n = x.length;
  let m = 0;
  for (let i = 0; i < n; i++) m += x[i];
  m /= n;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (x[i] - m) ** 2;
  const sd = Math.sqrt(ss / (n - 1));
  return { mean: m, sem: sd / Math.sqrt(n), sd };
}
