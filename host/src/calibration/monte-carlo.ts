// Propagation of distributions by Monte Carlo, JCGM 101:2008 (GUM Supplement 1): draw every
// input from its probability density, evaluate the model, and read the output's standard
// deviation and coverage interval from the sample. Used as the check of the linear propagation
// in gum-propagation.ts. Seeded and deterministic; pure.

export type InputDistribution =
  | { kind: "normal"; mean: number; sd: number }
  | { kind: "rectangular"; mean: number; half_width: number };

export interface MonteCarloResult {
  draws: number;
  mean: number;
  sd: number;
  /** Probabilistically symmetric 95 % coverage interval (JCGM 101:2008 §7.7). */
  low95: number;
  high95: number;
}

/** xoshiro128** (Blackman and Vigna, 2018): small state, good enough for 10^7 draws. */
export class SeededUniform {
  private s = new Uint32Array(4);
  constructor(seed: number) {
    // splitmix32-style scrambling so that neighbouring seeds give unrelated streams.
    let z = seed >>> 0;
    for (let i = 0; i < 4; i++) {
      z = (z + 0x9e3779b9) >>> 0;
      let t = z ^ (z >>> 16);
      t = Math.imul(t, 0x21f0aaad);
      t ^= t >>> 15;
      t = Math.imul(t, 0x735a2d97);
      this.s[i] = (t ^ (t >>> 15)) >>> 0;
    }
    if ((this.s[0] | this.s[1] | this.s[2] | this.s[3]) === 0) this.s[0] = 1;
  }

  private nextU32(): number {
    const s = this.s;
    const x = Math.imul(s[1], 5);
    const r = Math.imul((x << 7) | (x >>> 25), 9) >>> 0;
    const t = s[1] << 9;
    s[2] ^= s[0];
    s[3] ^= s[1];
    s[1] ^= s[2];
    s[0] ^= s[3];
    s[2] ^= t;
    s[3] = (s[3] << 11) | (s[3] >>> 21);
    return r;
  }

  /** Uniform on (0, 1), never exactly 0 (safe for logarithms). */
  next(): number {
    return (this.nextU32() + 0.5) / 4294967296;
  }
}

function drawer(rng: SeededUniform): (d: InputDistribution) => number {
  let spare: number | null = null;
  const normal = (): number => {
    if (spare !== null) {
      const v = spare;
      spare = null;
      return v;
    }
    // Box-Muller: two independent standard normals per pair of uniforms.
    const r = Math.sqrt(-2 * Math.log(rng.next()));
    const th = 2 * Math.PI * rng.next();
    spare = r * Math.sin(th);
    return r * Math.cos(th);
  };
  return (d) => (d.kind === "normal" ? d.mean + d.sd * normal() : d.mean + d.half_width * (2 * rng.next() - 1));
}

/** Runs the model `draws` times; output index `output` of a multi-output model is summarised. */
export function monteCarlo(
  model: (x: number[]) => number[], inputs: InputDistribution[], draws: number, seed: number, output = 0,
): MonteCarloResult {
  if (!Number.isInteger(draws) || draws < 1000) throw new RangeError(`"draws" must be an integer >= 1000, got ${draws}`);
  const draw = drawer(new SeededUniform(seed));
  const ys = new Float64Array(draws);
  const x = new Array<number>(inputs.length);
  let sum = 0;
  for (let k = 0; k < draws; k++) {
    for (let i = 0; i < inputs.length; i++) x[i] = draw(inputs[i]);
    const y = model(x)[output];
    ys[k] = y;
    sum += y;
  }
  const mean = sum / draws;
  let ss = 0;
  for (let k = 0; k < draws; k++) ss += (ys[k] - mean) ** 2;
  ys.sort();
  // JCGM 101:2008 §7.7: endpoints at ranks 0.025 M and 0.975 M of the sorted sample.
  const lowRank = Math.max(0, Math.round(0.025 * draws) - 1);
  const highRank = Math.min(draws - 1, Math.round(0.975 * draws) - 1);
  return { draws, mean, sd: Math.sqrt(ss / (draws - 1)), low95: ys[lowRank], high95: ys[highRank] };
}

/**
 * JCGM 101:2008 §8: the linear propagation is validated when its standard uncertainty agrees with
 * the Monte Carlo one within the numerical tolerance of u stated to `digits` significant digits.
 */
export function standardUncertaintyAgrees(u_gum: number, mc: MonteCarloResult, digits = 2): { delta: number; agrees: boolean } {
  const exponent = Math.floor(Math.log10(u_gum)) - digits + 1;
  const delta = 0.5 * 10 ** exponent;
  return { delta, agrees: Math.abs(u_gum - mc.sd) <= delta };
}
