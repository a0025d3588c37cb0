// Whiteness of the fit residuals. The noise model assumes independent edges; tick quantisation
// with a tick rate locked to the ring, interference, or a model that misses structure make
// neighbouring residuals alike. The lag-1 autocorrelation rho of the standardised residuals
// (each level in time order, pooled) measures it; rho sqrt(n) is ~N(0, 1) for white residuals
// (Box & Jenkins, Time Series Analysis, 1970, §2.1.6, large-lag standard error 1/sqrt(n)).

export interface Correlation {
  rho: number;
  /** rho sqrt(n): the white-noise z score. */
  z: number;
}

export function residualCorrelation(
  r: Float64Array, variance: Float64Array, used: Float64Array, rising: Uint8Array,
): Correlation {
  let sxy = 0, sxx = 0, n = 0;
  for (let lv = 0; lv <= 1; lv++) {
    let prev = NaN;
    for (let k = 0; k < r.length; k++) {
      if (!(used[k] > 0) || rising[k] !== lv) continue;
      const zk = r[k] / Math.sqrt(variance[k]);
      sxx += zk * zk;
      if (prev === prev) {
        sxy += prev * zk;
        n++;
      }
      prev = zk;
    }
  }
  const rho = sxx > 0 ? sxy / sxx : 0;
  return { rho, z: rho * Math.sqrt(n) };
}

/**
 * Variance inflation for positively correlated residuals, (1 + rho)/(1 - rho): the ratio of
 * the variance of a mean of an AR(1) sequence to that of independent samples, i.e. n over the
 * effective number of independent edges (Bayley & Hammersley, J. R. Stat. Soc. B 8, 1946). Only
 * applied when the correlation is significant (z > 3); capped at 100.
 */
export function correlationInflation(c: Correlation): number {
  if (!(c.z > 3 && c.rho > 0)) return 1;
  return Math.min(100, (1 + c.rho) / (1 - Math.min(c.rho, 0.99)));
}
