// Law of propagation of uncertainty, JCGM 100:2008 §5.1-5.2: u_c^2(y) = c^T V c with the
// sensitivity coefficients c_i = df/dx_i taken here by central differences, so any measurement
// model written as a plain function can be propagated. Pure: no I/O.

export interface InputQuantity {
  name: string;
  value: number;
  /** Standard uncertainty, same unit as value. */
  u: number;
  /** Group in the budget (fit, capacitance, timebase, self-capacitance, ...). */
  group?: string;
}

export interface Contribution {
  name: string;
  group: string;
  /** Sensitivity coefficient df/dx for this input. */
  sensitivity: number;
  /** |c_i| u(x_i), in the unit of the output (JCGM 100:2008 §5.1.3 u_i(y)). */
  u_y: number;
}

export interface PropagatedOutput {
  value: number;
  /** Combined standard uncertainty. */
  u: number;
  contributions: Contribution[];
}

/** Relative step for the central differences: small against any u/x met here, large against rounding. */
const REL_STEP = 1e-6;

/** Sensitivities of every output to every input: rows outputs, columns inputs. */
export function sensitivities(model: (x: number[]) => number[], x: number[], u: number[]): number[][] {
  const y0 = model(x);
  const rows = y0.map(() => new Array<number>(x.length).fill(0));
  for (let i = 0; i < x.length; i++) {
    // Step on the scale of the uncertainty where it exists; it keeps the difference linearised
    // over the range the input really varies and avoids a zero step for a zero-valued input.
    const h = u[i] > 0 ? u[i] * 1e-3 : Math.max(Math.abs(x[i]) * REL_STEP, 1e-30);
    const xp = x.slice();
    const xm = x.slice();
    xp[i] += h;
    xm[i] -= h;
    const yp = model(xp);
    const ym = model(xm);
    for (let j = 0; j < y0.length; j++) rows[j][i] = (yp[j] - ym[j]) / (2 * h);
  }
  return rows;
}

/**
 * Propagates independent inputs (optionally with correlation coefficients r[i][j]) through a
 * model with several outputs. Correlated terms enter the combined u but not the per-input list,
 * which then shows what each input alone contributes.
 */
export function propagate(
  model: (x: number[]) => number[], inputs: InputQuantity[], correlation?: number[][],
): PropagatedOutput[] {
  const x = inputs.map((q) => q.value);
  const u = inputs.map((q) => q.u);
  const y = model(x);
  const c = sensitivities(model, x, u);
  return y.map((value, j) => {
    let variance = 0;
    for (let a = 0; a < x.length; a++) {
      for (let b = 0; b < x.length; b++) {
        const r = a === b ? 1 : correlation?.[a]?.[b] ?? 0;
        if (r !== 0) variance += c[j][a] * c[j][b] * u[a] * u[b] * r;
      }
    }
    const contributions = inputs.map((q, i) => ({
      name: q.name, group: q.group ?? q.name, sensitivity: c[j][i], u_y: Math.abs(c[j][i]) * u[i],
    }));
    return { value, u: Math.sqrt(Math.max(variance, 0)), contributions };
  });
}

/** Root-sum-square of the contributions in each group, in first-seen order. */
export function groupContributions(cs: Contribution[]): { group: string; u_y: number }[] {
  const order: string[] = [];
  const sums = new Map<string, number>();
  for (const c of cs) {
    if (!sums.has(c.group)) order.push(c.group);
    sums.set(c.group, (sums.get(c.group) ?? 0) + c.u_y * c.u_y);
  }
  return order.map((group) => ({ group, u_y: Math.sqrt(sums.get(group)!) }));
}

/** Standard uncertainty of a rectangular distribution of half-width a (JCGM 100:2008 §4.3.7). */
export function rectangularU(halfWidth: number): number {
  return halfWidth / Math.sqrt(3);
}
