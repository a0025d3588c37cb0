// A small SVG chart writer for the report: one x-y panel with 1-2-5 ticks, lines, point marks,
// reference lines and labels. Output is Markup from the report's one escaping template (html.ts):
// every label is escaped there. Styling comes from classes the page's style sheet defines, so
// every chart shares one look. Pure: no I/O.

import { html, joinMarkup, type Markup } from "./html.ts";

export interface Axis {
  label: string;
  min?: number;
  max?: number;
  /** Multiplies values for the tick labels only (e.g. 1e6 to label seconds in µs). */
  scale?: number;
  /** Logarithmic axis (x only): for quantities that span decades, like a decaying amplitude. */
  log?: boolean;
}

export interface Series {
  kind: "line" | "points" | "bars-h";
  xs: ArrayLike<number>;
  ys: ArrayLike<number>;
  /** Style-sheet class: ring, envelope, edge, reject, model, resid, bar … */
  cls: string;
  /** Legend text; omitted series are not listed. */
  name?: string;
}

export interface Chart {
  title: string;
  /** Unique on the page (clip-path ids are derived from it). */
  id: string;
  width?: number;
  height?: number;
  x: Axis;
  y: Axis;
  series: Series[];
  /** Horizontal reference lines at these y values, with labels. */
  hlines?: { y: number; label: string }[];
}

const M = { left: 64, right: 16, top: 30, bottom: 42 };

/** Tick positions at 1, 2 or 5 times a power of ten, about `target` of them. */
export function niceTicks(lo: number, hi: number, target = 6): number[] {
  if (!(hi > lo)) return [lo];
  const raw = (hi - lo) / target;
  const p = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((k) => k * p).find((s) => s >= raw) ?? 10 * p;
  const out: number[] = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi + step * 1e-9; v += step) out.push(Math.abs(v) < step * 1e-9 ? 0 : v);
  return out;
}

/** 1, 2 and 5 times each power of ten inside [lo, hi] (lo > 0). */
export function logTicks(lo: number, hi: number): number[] {
  const out: number[] = [];
  for (let e = Math.floor(Math.log10(lo)); e <= Math.ceil(Math.log10(hi)); e++) {
    for (const m of [1, 2, 5]) {
      const v = Number((m * 10 ** e).toPrecision(3));
      if (v >= lo * (1 - 1e-9) && v <= hi * (1 + 1e-9)) out.push(v);
    }
  }
  return out;
}

function extent(series: Series[], pick: "xs" | "ys", extra: number[] = []): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (const s of series) {
    const a = s[pick];
    for (let i = 0; i < a.length; i++) {
      const v = a[i];
      if (!Number.isFinite(v)) continue;
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
  }
  for (const v of extra) {
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (!(hi > lo)) {
    const c = Number.isFinite(lo) ? lo : 0;
    const d = Math.abs(c) * 0.1 || 1;
    return [c - d, c + d];
  }
  return [lo, hi];
}

const num = (v: number) => (Math.round(v * 10) / 10).toString();

function tickLabel(v: number): string {
  const a = Math.abs(v);
  if (a !== 0 && (a >= 1e5 || a < 1e-3)) return v.toExponential(1);
  return Number(v.toPrecision(6)).toString();
}

export function renderChart(c: Chart): Markup {
  const W = c.width ?? 760;
  const H = c.height ?? 300;
  const pw = W - M.left - M.right;
  const ph = H - M.top - M.bottom;
  let [x0, x1] = extent(c.series, "xs");
  let [y0, y1] = extent(c.series, "ys", (c.hlines ?? []).map((h) => h.y));
  if (c.x.min !== undefined) x0 = c.x.min;
  if (c.x.max !== undefined) x1 = c.x.max;
  if (c.y.min !== undefined) y0 = c.y.min;
  if (c.y.max !== undefined) y1 = c.y.max;
  const padY = (y1 - y0) * 0.06;
  y0 -= padY;
  y1 += padY;
  const logX = c.x.log === true && x0 > 0;
  const fx = (v: number) => (logX ? Math.log10(v) : v);
  const sx = (v: number) => M.left + ((fx(v) - fx(x0)) / (fx(x1) - fx(x0))) * pw;
  const sy = (v: number) => M.top + (1 - (v - y0) / (y1 - y0)) * ph;
  const xs = c.x.scale ?? 1;
  const ys = c.y.scale ?? 1;
  const parts: Markup[] = [];
  parts.push(html`<svg xmlns="http://www.w3.org/2000/svg" class="chart" viewBox="0 0 ${W} ${H}" width="${W}" height="${H}" role="img" aria-label="${c.title}">`);
  parts.push(html`<rect class="plot-bg" x="${M.left}" y="${M.top}" width="${pw}" height="${ph}"/>`);
  parts.push(html`<text class="chart-title" x="${M.left}" y="${M.top - 10}">${c.title}</text>`);
  for (const t of logX ? logTicks(x0 * xs, x1 * xs) : niceTicks(x0 * xs, x1 * xs)) {
    const X = num(sx(t / xs));
    parts.push(html`<line class="grid" x1="${X}" x2="${X}" y1="${M.top}" y2="${M.top + ph}"/>`);
    parts.push(html`<text class="tick" x="${X}" y="${M.top + ph + 16}" text-anchor="middle">${tickLabel(t)}</text>`);
  }
  for (const t of niceTicks(y0 * ys, y1 * ys, 5)) {
    const Y = num(sy(t / ys));
    parts.push(html`<line class="grid" x1="${M.left}" x2="${M.left + pw}" y1="${Y}" y2="${Y}"/>`);
    parts.push(html`<text class="tick" x="${M.left - 6}" y="${Y}" dy="4" text-anchor="end">${tickLabel(t)}</text>`);
  }
  parts.push(html`<text class="axis-label" x="${M.left + pw / 2}" y="${H - 6}" text-anchor="middle">${c.x.label}</text>`);
  parts.push(html`<text class="axis-label" transform="translate(14 ${M.top + ph / 2}) rotate(-90)" text-anchor="middle">${c.y.label}</text>`);
  parts.push(html`<clipPath id="clip-${hash(c.id)}"><rect x="${M.left}" y="${M.top}" width="${pw}" height="${ph}"/></clipPath>`);
  parts.push(html`<g clip-path="url(#clip-${hash(c.id)})">`);
  // Labels alternate right-above / left-below so two close reference lines stay readable.
  (c.hlines ?? []).forEach((h, k) => {
    const Y = num(sy(h.y));
    const label = k % 2 === 0
      ? html`<text class="ref-label" x="${M.left + pw - 4}" y="${Y}" dy="-4" text-anchor="end">${h.label}</text>`
      : html`<text class="ref-label" x="${M.left + 4}" y="${Y}" dy="11">${h.label}</text>`;
    parts.push(html`<line class="ref" x1="${M.left}" x2="${M.left + pw}" y1="${Y}" y2="${Y}"/>${label}`);
  });
  for (const s of c.series) parts.push(renderSeries(s, sx, sy));
  parts.push(html`</g>`);
  parts.push(legend(c.series, M.left + pw, M.top - 10));
  parts.push(html`</svg>`);
  return joinMarkup(parts, "\n");
}

function renderSeries(s: Series, sx: (v: number) => number, sy: (v: number) => number): Markup {
  const n = Math.min(s.xs.length, s.ys.length);
  if (s.kind === "line") {
    const pts: string[] = [];
    for (let i = 0; i < n; i++) if (Number.isFinite(s.ys[i])) pts.push(`${num(sx(s.xs[i]))},${num(sy(s.ys[i]))}`);
    return html`<polyline class="${s.cls}" points="${pts.join(" ")}"/>`;
  }
  if (s.kind === "bars-h") {
    const out: Markup[] = [];
    for (let i = 0; i < n; i++) {
      const y = sy(s.ys[i]);
      out.push(html`<rect class="${s.cls}" x="${num(sx(0))}" y="${num(y - 9)}" width="${num(Math.max(1, sx(s.xs[i]) - sx(0)))}" height="18"/>`);
    }
    return joinMarkup(out);
  }
  const out: Markup[] = [];
  for (let i = 0; i < n; i++) if (Number.isFinite(s.ys[i])) out.push(html`<circle class="${s.cls}" cx="${num(sx(s.xs[i]))}" cy="${num(sy(s.ys[i]))}" r="2.6"/>`);
  return html`<g>${out}</g>`;
}

function legend(series: Series[], right: number, y: number): Markup {
  const named = series.filter((s) => s.name);
  let x = right;
  const out: Markup[] = [];
  for (const s of named.slice().reverse()) {
    const w = 18 + 7 * s.name!.length;
    x -= w;
    out.push(html`<g class="legend"><rect class="${s.cls} key" x="${x}" y="${y - 8}" width="10" height="10"/><text x="${x + 14}" y="${y + 1}">${s.name!}</text></g>`);
  }
  return joinMarkup(out);
}

function hash(s: string): string {
  let h = 2166136261;
  for (let i = 0; i < s.length; i++) h = Math.imul(h ^ s.charCodeAt(i), 16777619);
  return (h >>> 0).toString(36);
}
