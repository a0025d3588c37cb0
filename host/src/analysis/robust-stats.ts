// Order statistics for robust scales. The MAD of a normal sample times 1.4826 estimates its
// standard deviation (Huber & Ronchetti, Robust Statistics, 2nd ed. 2009, §5.1).

export const MAD_TO_SIGMA = 1.482602218505602;

/** Median of the first n entries of `values` (copied; the input is left as is). */
export function median(values: ArrayLike<number>, n: number = values.length, scratch?: Float64Array): number {
  if (n <= 0) return NaN;
  const a = scratch && scratch.length >= n ? scratch.subarray(0, n) : new Float64Array(n);
  for (let i = 0; i < n; i++) a[i] = values[i];
  const mid = n >> 1;
  const hi = select(a, mid);
  if (n % 2 === 1) return hi;
  let lo = -Infinity;
  for (let i = 0; i < mid; i++) if (a[i] > lo) lo = a[i];
  return 0.5 * (lo + hi);
}

/** Robust standard deviation 1.4826 * median(|x - median(x)|). */
export function madSigma(values: ArrayLike<number>, n: number = values.length, scratch?: Float64Array): number {
  const m = median(values, n, scratch);
  const d = scratch && scratch.length >= n ? scratch.subarray(0, n) : new Float64Array(n);
  for (let i = 0; i < n; i++) d[i] = Math.abs(values[i] - m);
  return MAD_TO_SIGMA * median(d, n, d);
}

/** Hoare quickselect: after the call a[k] holds the k-th smallest and a[0..k) are <= a[k]. */
function select(a: Float64Array, k: number): number {
  let lo = 0;
  let hi = a.length - 1;
  while (lo < hi) {
    const pivot = a[(lo + hi) >> 1];
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) {
        const t = a[i];
        a[i] = a[j];
        a[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else break;
  }
  return a[k];
}

/** Huber weight min(1, c/|z|) (Huber 1964); c = 2 keeps ~99 % efficiency at the normal. */
export function huberWeight(z: number, c: number): number {
  const a = Math.abs(z);
  return a <= c ? 1 : c / a;
}
