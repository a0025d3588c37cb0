// Dormand-Prince 5(4) explicit Runge-Kutta with adaptive steps (J. R. Dormand and P. J. Prince,
// "A family of embedded Runge-Kutta formulae", J. Comp. Appl. Math. 6(1), 1980; coefficients as
// tabulated in Hairer, Norsett and Wanner, Solving ODEs I, 2nd ed., 1993, table II.5.2).
// Each accepted step is handed to the caller with both end states and derivatives, so the
// caller can locate events on a cubic Hermite interpolant between them.

export type Rhs = (t: number, y: Float64Array, dy: Float64Array) => void;

export interface StepInfo {
  t0: number;
  t1: number;
  y0: Float64Array;
  y1: Float64Array;
  f0: Float64Array;
  f1: Float64Array;
}

export interface DopriOptions {
  rtol: number;
  atol: number;
  h0: number;
  hmax: number;
}

const C = [0, 1 / 5, 3 / 10, 4 / 5, 8 / 9, 1, 1];
const A = [
  [],
  [1 / 5],
  [3 / 40, 9 / 40],
  [44 / 45, -56 / 15, 32 / 9],
  [19372 / 6561, -25360 / 2187, 64448 / 6561, -212 / 729],
  [9017 / 3168, -355 / 33, 46732 / 5247, 49 / 176, -5103 / 18656],
  [35 / 384, 0, 500 / 1113, 125 / 192, -2187 / 6784, 11 / 84],
];
// Fifth-order weights are A[6]; the embedded fourth-order solution uses E for the error.
const E = [71 / 57600, 0, -71 / 16695, 71 / 1920, -17253 / 339200, 22 / 525, -1 / 40];

/**
 * Integrates from t0 until `onStep` returns false or tEnd is reached. Returns the final time.
 * Throws if the step size collapses (the problem is not solvable at this tolerance).
 */
export function integrate(f: Rhs, t0: number, y0: Float64Array, tEnd: number, opts: DopriOptions, onStep: (s: StepInfo) => boolean): number {
  const n = y0.length;
  const k = Array.from({ length: 7 }, () => new Float64Array(n));
  let y: Float64Array = Float64Array.from(y0);
  const ytmp = new Float64Array(n);
  const ynew = new Float64Array(n);
  let t = t0;
  let h = Math.min(opts.h0, opts.hmax);
  f(t, y, k[0]);
  let steps = 0;
  while (t < tEnd) {
    if (t + h > tEnd) h = tEnd - t;
    for (let s = 1; s < 7; s++) {
      for (let i = 0; i < n; i++) {
        let acc = y[i];
        for (let j = 0; j < s; j++) acc += h * A[s][j] * k[j][i];
        ytmp[i] = acc;
      }
      f(t + C[s] * h, ytmp, k[s]);
      if (s === 6) ynew.set(ytmp);
    }
    let err = 0;
    for (let i = 0; i < n; i++) {
      let e = 0;
      for (let j = 0; j < 7; j++) e += E[j] * k[j][i];
      const sc = opts.atol + opts.rtol * Math.max(Math.abs(y[i]), Math.abs(ynew[i]));
      err = Math.max(err, Math.abs(h * e) / sc);
    }
    if (err <= 1) {
      const info: StepInfo = { t0: t, t1: t + h, y0: y, y1: Float64Array.from(ynew), f0: Float64Array.from(k[0]), f1: Float64Array.from(k[6]) };
      t += h;
      y = info.y1;
      k[0].set(k[6]); // first-same-as-last
      if (!onStep(info)) return t;
    }
    const factor = err === 0 ? 5 : Math.min(5, Math.max(0.2, 0.9 * Math.pow(err, -0.2)));
    h = Math.min(h * factor, opts.hmax);
    if (h < 1e-15 * Math.max(Math.abs(t), 1e-9) || ++steps > 50_000_000) {
      throw new Error(`ODE step size collapsed at t = ${t}`);
    }
  }
  return t;
}

/** Cubic Hermite value of component `i` at time t inside an accepted step. */
export function hermite(s: StepInfo, i: number, t: number): number {
  const h = s.t1 - s.t0;
  const x = (t - s.t0) / h;
  const x2 = x * x;
  const x3 = x2 * x;
  return (2 * x3 - 3 * x2 + 1) * s.y0[i] + (x3 - 2 * x2 + x) * h * s.f0[i] + (-2 * x3 + 3 * x2) * s.y1[i] + (x3 - x2) * h * s.f1[i];
}
