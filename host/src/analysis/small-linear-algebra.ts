// Dense symmetric solves for the 2-6 parameter fits of this folder. The normal matrices mix
// parameters with very different units (rad/s, rad, 1/s), so every solve first scales the
// matrix to a unit diagonal (Jacobi scaling), which keeps Cholesky well conditioned without
// a general-purpose library.

/**
 * Solves (H + lambda diag(H)) x = b for symmetric positive semi-definite H (row-major n x n).
 * Returns false when the scaled matrix is not positive definite. `work` needs n*n + n entries.
 */
export function solveDamped(
  n: number, h: Float64Array, b: Float64Array, lambda: number, x: Float64Array, work: Float64Array,
): boolean {
  const a = work; // n*n scaled matrix, then its Cholesky factor
  const d = work.subarray(n * n, n * n + n); // scale factors
  for (let i = 0; i < n; i++) {
    const hii = h[i * n + i];
    if (!(hii > 0)) return false;
    d[i] = 1 / Math.sqrt(hii);
  }
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) a[i * n + j] = h[i * n + j] * d[i] * d[j];
    a[i * n + i] = 1 + lambda;
  }
  if (!cholesky(n, a)) return false;
  for (let i = 0; i < n; i++) x[i] = b[i] * d[i];
  choleskySolve(n, a, x);
  for (let i = 0; i < n; i++) x[i] *= d[i];
  return true;
}

/** Inverse of a symmetric positive definite matrix (row-major), or null if singular. */
export function invertSymmetric(n: number, h: ArrayLike<number>): Float64Array | null {
  const d = new Float64Array(n);
  const a = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    const hii = h[i * n + i];
    if (!(hii > 0)) return null;
    d[i] = 1 / Math.sqrt(hii);
  }
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) a[i * n + j] = h[i * n + j] * d[i] * d[j];
  if (!cholesky(n, a)) return null;
  const inv = new Float64Array(n * n);
  const col = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    col.fill(0);
    col[j] = 1;
    choleskySolve(n, a, col);
    for (let i = 0; i < n; i++) inv[i * n + j] = col[i] * d[i] * d[j];
  }
  return inv;
}

/** In-place lower Cholesky factor; false if not positive definite (relative pivot < 1e-15). */
function cholesky(n: number, a: Float64Array): boolean {
  for (let j = 0; j < n; j++) {
    let s = a[j * n + j];
    for (let k = 0; k < j; k++) s -= a[j * n + k] * a[j * n + k];
    if (!(s > 1e-15)) return false;
    const l = Math.sqrt(s);
    a[j * n + j] = l;
    for (let i = j + 1; i < n; i++) {
      let t = a[i * n + j];
      for (let k = 0; k < j; k++) t -= a[i * n + k] * a[j * n + k];
      a[i * n + j] = t / l;
    }
  }
  return true;
}

function choleskySolve(n: number, l: Float64Array, x: Float64Array): void {
  for (let i = 0; i < n; i++) {
    let s = x[i];
    for (let k = 0; k < i; k++) s -= l[i * n + k] * x[k];
    x[i] = s / l[i * n + i];
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = x[i];
    for (let k = i + 1; k < n; k++) s -= l[k * n + i] * x[k];
    x[i] = s / l[i * n + i];
  }
}

/** x^T M x for a row-major n x n matrix. */
export function quadraticForm(n: number, m: ArrayLike<number>, x: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < n; i++) {
    let r = 0;
    for (let j = 0; j < n; j++) r += m[i * n + j] * x[j];
    s += x[i] * r;
  }
  return s;
}
