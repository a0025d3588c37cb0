// Engineering notation with SI prefixes, and value ± uncertainty rounded so that the
// uncertainty has two significant digits (JCGM 100:2008 §7.2.6 recommends at most two).

const PREFIXES: [number, string][] = [
  [1e9, "G"], [1e6, "M"], [1e3, "k"], [1, ""], [1e-3, "m"], [1e-6, "µ"], [1e-9, "n"], [1e-12, "p"], [1e-15, "f"],
];

function prefixFor(x: number): [number, string] {
  const a = Math.abs(x);
  if (a === 0 || !Number.isFinite(a)) return [1, ""];
  for (const p of PREFIXES) if (a >= p[0] * 0.99995) return p;
  return PREFIXES[PREFIXES.length - 1];
}

/** `4.70 µH` style, with `digits` significant digits. */
export function formatSi(value: number, unit: string, digits = 4): string {
  if (!Number.isFinite(value)) return `${value} ${unit}`;
  const [scale, prefix] = prefixFor(value);
  const scaled = value / scale;
  const intDigits = Math.max(1, Math.floor(Math.log10(Math.abs(scaled) || 1)) + 1);
  const decimals = Math.max(0, digits - intDigits);
  return `${scaled.toFixed(decimals)} ${prefix}${unit}`;
}

/** Value and expanded uncertainty in one prefix, the uncertainty to two significant digits. */
export function formatWithUncertainty(value: number, u: number, unit: string): { value: string; u: string; unit: string } {
  // Dimensionless figures (Q) are printed as plain numbers, without a prefix. A value smaller than
  // its uncertainty takes the uncertainty's prefix, so U keeps two significant digits (0.8 pF ±
  // 9.3 pF, not 832 fF ± 9337 fF).
  const [scale, prefix] = unit === "" ? [1, ""] : prefixFor(Number.isFinite(u) && Math.abs(u) > Math.abs(value) ? u : value);
  if (!(u > 0) || !Number.isFinite(u)) return { value: formatSi(value, unit).split(" ")[0], u: "?", unit: prefix + unit };
  const us = u / scale;
  const decimals = Math.max(0, 1 - Math.floor(Math.log10(us)));
  return { value: (value / scale).toFixed(decimals), u: us.toFixed(decimals), unit: prefix + unit };
}
