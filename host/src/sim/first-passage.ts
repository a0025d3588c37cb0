// First passage of v(t) + n(t) across a threshold, n a stationary first-order band-limited
// (Ornstein-Uhlenbeck) noise of rms sigma and time constant tau = 1 / (2 pi bandwidth).
//
// The noise is advanced with exact OU transitions, n(t+h) = rho n + sigma sqrt(1 - rho^2) xi,
// rho = exp(-h/tau). Between two known points the path may still have crossed: for a step h << tau
// the OU path is a Brownian motion with diffusion D = 2 sigma^2 / tau (its drift does not matter),
// and with the ring linear inside the step, the chance that the bridge between gaps d0, d1 > 0
// touched the barrier is exp(-2 d0 d1 / (D h)) (the Brownian-bridge crossing probability used
// for barrier crossing in Monte Carlo, P. Glasserman, "Monte Carlo Methods in Financial
// Engineering", Springer 2004, section 6.4; from memory). A step where that chance is not below
// PRUNE_P is halved, its midpoint drawn from the exact OU bridge: where the ring + noise crosses
// between two points, down to `resolution_s` (the crossing interpolated inside it); where only
// the bridge probability says it may have, down to min(tau/64, 2 % of sigma/slope), where that
// probability decides and the crossing is put at the interval's middle.
//
// Steps adapt: where the ring stays more than FAR_SIGMA sigma (plus the noise's current push) from
// the threshold, one exact OU jump covers the whole stretch (Waveform.nextReach finds its end);
// an excursion of 8 sigma within such a stretch has a probability of order 1e-14 per tau and is
// neglected. Near the threshold the steps are tau/4 to 2 tau (nearStep).

import type { Waveform } from "../physics/waveform.ts";
import type { Random } from "./random.ts";

/** Stretches where the ring stays this many sigma from the threshold are jumped over. */
export const FAR_SIGMA = 8;
/** A step whose crossing probability is below this is taken as not crossing. */
const PRUNE_P = 1e-6;
const LN_PRUNE = -Math.log(PRUNE_P);

export interface NoiseProcess {
  sigma_v: number;
  tau_s: number;
}

export interface FirstPassageOptions {
  /** Finest interval of the crossing search, seconds (default 50 ps). */
  resolution_s?: number;
}

/** A decision: the time v + n reached the threshold, and the ring's slope there. */
export interface Decision {
  t_s: number;
  slope_v_s: number;
}

/**
 * Walks one waveform with its noise: `next` finds the first passage across a threshold from the
 * current time on, then continues from there (the noise path is kept, so re-arming on the other
 * threshold sees the same noise).
 */
export class FirstPassageWalker {
  /** Current time and the noise value there. */
  t_s = 0;
  n_v: number;
  /** Work counters (deterministic): waveform evaluations and exact OU draws. */
  evaluations = 0;
  draws = 0;
  private readonly sigma: number;
  private readonly tau: number;
  private readonly res: number;
  private bridgeRes = 0;
  private readonly curvature: (t: number) => number;

  constructor(
    private readonly w: Waveform,
    noise: NoiseProcess,
    private readonly rng: Random,
    opts: FirstPassageOptions = {},
  ) {
    this.sigma = noise.sigma_v;
    this.tau = noise.tau_s;
    this.res = opts.resolution_s ?? 50e-12;
    this.n_v = this.sigma > 0 ? this.sigma * rng.normal() : 0;
    const c = w.curvatureAfter;
    this.curvature = c ? (t) => c.call(w, t) : () => 0;
  }

  /**
   * First time >= now at which v + n reaches th_v from below (direction 1) or from above (-1),
   * before end_s; null when it does not. Afterwards the walker stands just past the decision.
   */
  next(th_v: number, dir: 1 | -1, end_s: number): Decision | null {
    const { w, sigma, tau } = this;
    let t = this.t_s;
    let n = this.n_v;
    const gapAt = (x: number, nx: number) => {
      this.evaluations++;
      return dir * (th_v - w.value(x) - nx);
    };
    while (t < end_s) {
      const vt = w.value(t);
      this.evaluations++;
      const gDet = dir * (th_v - vt);
      const g0 = gDet - dir * n;
      if (g0 <= 0) return this.decide(t, t, n);
      // Far: jump to where the ring first comes within the margin of the threshold.
      const margin = FAR_SIGMA * sigma + Math.max(dir * n, 0);
      if (gDet > margin && w.nextReach) {
        const tr = w.nextReach(t, th_v - dir * margin, dir);
        this.evaluations++;
        if (!(tr < end_s)) {
          this.advance(end_s, n, end_s - t);
          return null;
        }
        if (tr - t > this.res) {
          n = this.ou(n, tr - t);
          t = tr;
          continue;
        }
      } else if (!w.nextReach) {
        const env = w.amplitudeAfter(t);
        if (dir === 1 ? env < th_v - margin : -env > th_v + margin) {
          this.advance(end_s, n, end_s - t);
          return null;
        }
      }
      // Near: a step the crossing search will most likely rule out at once (gap after the
      // ring's move still well above the noise's spread), then searched.
      const speed = Math.abs(w.slope(t));
      const h = Math.min(this.nearStep(g0, speed), end_s - t);
      // A crossing found only by the bridge probability is placed at its interval's middle: the
      // interval is at most 2 % of the timing noise sigma / speed, and at most tau / 64.
      this.bridgeRes = Math.min(this.tau / 64, Math.max(this.res, (0.02 * sigma) / speed));
      const t1 = t + h;
      const n1 = this.ou(n, h);
      const g1 = gapAt(t1, n1);
      if (this.search(t, n, g0, t1, n1, g1, th_v, dir)) return this.decide(this.hitT, this.hitTAfter, this.hitNAfter);
      t = t1;
      n = n1;
    }
    this.t_s = t;
    this.n_v = n;
    return null;
  }

  /** The last crossing found by search: its time, and the known point just after it. */
  private hitT = 0;
  private hitTAfter = 0;
  private hitNAfter = 0;
  /** Per bisection level of the current step: OU increment variance, bridge mean factor and sd. */
  private readonly lvVar = new Float64Array(64);
  private readonly lvMean = new Float64Array(64);
  private readonly lvSd = new Float64Array(64);
  private lvLast = 0;
  private lvBridge = 0;
  private chord = 0;

  /**
   * Step length from the gap g0 (> 0) and the ring's speed: long enough to cover most of the
   * gap on a fast edge, short enough that 2 g0 g1 / (D h) stays above -ln(PRUNE_P) for the
   * expected g1 = g0 - speed h (then the search rules the step out at its first look); between
   * tau/16 and 2 tau for a noisy comparator.
   */
  private nearStep(g0: number, speed: number): number {
    const { sigma, tau } = this;
    if (sigma === 0) return speed > 0 ? Math.max(g0 / speed, 32 * this.res) : 1e3 * this.res;
    const d = (2 * sigma * sigma) / tau;
    const h = (2 * g0 * g0) / (-Math.log(PRUNE_P) * d + 2 * g0 * speed);
    return Math.min(2 * tau, Math.max(tau / 4, h, 32 * this.res));
  }

  private decide(t: number, tAfter: number, nAfter: number): Decision {
    this.t_s = tAfter;
    this.n_v = nAfter;
    return { t_s: t, slope_v_s: this.w.slope(t) };
  }

  private advance(t: number, n: number, h: number): void {
    this.t_s = t;
    this.n_v = this.ou(n, h);
  }

  /** Exact OU transition over h. */
  private ou(n: number, h: number): number {
    if (this.sigma === 0) return 0;
    this.draws++;
    const rho = Math.exp(-h / this.tau);
    return rho * n + this.sigma * Math.sqrt(Math.max(1 - rho * rho, 0)) * this.rng.normal();
  }

  /** Searches [a, b] (gaps ga > 0 and gb) for the first crossing; true when one was found (hit*). */
  private search(a: number, na: number, ga: number, b: number, nb: number, gb: number, th: number, dir: 1 | -1): boolean {
    const { sigma, tau } = this;
    const h = b - a;
    // Level k halves the step k times: r = exp(-h_k / tau), the midpoint's q = sqrt(r).
    let r = Math.exp(-h / tau);
    let hk = h;
    let k = 0;
    const s2 = sigma * sigma;
    this.lvBridge = 63;
    for (; k < 63; k++) {
      if (hk <= this.bridgeRes && k < this.lvBridge) this.lvBridge = k;
      const q = Math.sqrt(r);
      this.lvVar[k] = s2 * (1 - r * r);
      this.lvMean[k] = q / (1 + q * q);
      this.lvSd[k] = sigma * Math.sqrt((1 - q * q) / (1 + q * q));
      if (hk <= this.res) break;
      r = q;
      hk *= 0.5;
    }
    this.lvLast = k;
    // The ring's largest deviation from its chord over the step, max|v''| h^2 / 8, per level.
    this.chord = (this.curvature(a) * h * h) / 8;
    return this.bisect(0, a, na, ga, b, nb, gb, th, dir);
  }

  private bisect(k: number, a: number, na: number, ga: number, b: number, nb: number, gb: number, th: number, dir: 1 | -1): boolean {
    const vh = this.lvVar[k];
    if (gb > 0) {
      // Guarded by the ring's bulge towards the threshold between the ends.
      const c = this.chord * 0.25 ** k;
      const da = ga - c;
      const db = gb - c;
      if (da > 0 && db > 0 && 2 * da * db > LN_PRUNE * vh) return false;
      if (k >= this.lvBridge) {
        const p = vh > 0 ? Math.exp((-2 * ga * gb) / vh) : 0;
        if (!(this.rng.uniform() < p)) return false;
        this.hitT = 0.5 * (a + b);
        this.hitTAfter = b;
        this.hitNAfter = nb;
        return true;
      }
    } else if (k >= this.lvLast) {
      this.hitT = a + ((b - a) * ga) / (ga - gb);
      this.hitTAfter = b;
      this.hitNAfter = nb;
      return true;
    }
    // Midpoint from the exact OU bridge: mean q (na + nb) / (1 + q^2), variance
    // sigma^2 (1 - q^2) / (1 + q^2), q = exp(-h / (2 tau)).
    const m = 0.5 * (a + b);
    let nm = 0;
    if (this.sigma > 0) {
      this.draws++;
      nm = this.lvMean[k] * (na + nb) + this.lvSd[k] * this.rng.normal();
    }
    this.evaluations++;
    const gm = dir * (th - this.w.value(m) - nm);
    if (gm <= 0) return this.bisect(k + 1, a, na, ga, m, nm, gm, th, dir);
    if (this.bisect(k + 1, a, na, ga, m, nm, gm, th, dir)) return true;
    return this.bisect(k + 1, m, nm, gm, b, nb, gb, th, dir);
  }
}
