// Running statistics of a sorting session: mean and standard deviation (Welford's update, which
// stays accurate when the spread is tiny next to the mean, as it is for a batch of like parts),
// extremes, and process capability against the specification limits. Pure: no I/O.

import type { Limits } from "../values/tolerance.ts";

export interface StatsSummary {
  n: number;
  mean: number;
  /** Sample standard deviation (n - 1); NaN below two values. */
  sd: number;
  min: number;
  max: number;
  /** (USL - LSL) / 6 s; NaN when undefined. Common bench practice, no source. */
  cp: number;
  /** min(USL - mean, mean - LSL) / 3 s. */
  cpk: number;
}

export class RunningStats {
  private n = 0;
  private mean = 0;
  private m2 = 0;
  private min = Infinity;
  private max = -Infinity;

  add(x: number): void {
    this.n++;
    const d = x - this.mean;
    this.mean += d / this.n;
    this.m2 += d * (x - this.mean);
    if (x < this.min) this.min = x;
    if (x > this.max) this.max = x;
  }

  get count(): number {
    return this.n;
  }

  summary(limits?: Limits): StatsSummary {
    const sd = this.n >= 2 ? Math.sqrt(this.m2 / (this.n - 1)) : NaN;
    let cp = NaN;
    let cpk = NaN;
    if (limits && sd > 0) {
      cp = (limits.upper - limits.lower) / (6 * sd);
      cpk = Math.min(limits.upper - this.mean, this.mean - limits.lower) / (3 * sd);
    }
    return { n: this.n, mean: this.n > 0 ? this.mean : NaN, sd, min: this.min, max: this.max, cp, cpk };
  }
}
