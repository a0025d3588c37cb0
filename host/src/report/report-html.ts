// The report page: one section per capture with the key figures, warnings and four charts
// (ring with edges and envelope, residuals over time, period against amplitude, uncertainty
// budget). Self-contained: inline CSS and SVG, no scripts, no external resources. Every piece is
// built with the one escaping template of html.ts, so no field of a capture file (label, source
// name, tester id, warning text) can reach the page as markup; the Content-Security-Policy allows
// nothing but the page's own style sheet (by its hash) and inline SVG, so even markup that got in
// could not run script, load a resource or submit a form. Pure: the caller passes the generation
// time.

import { createHash } from "node:crypto";
import { formatSi } from "../format/si.ts";
import { formatMeasured } from "../values/format-value.ts";
import { html, projectConstant, type Markup } from "./html.ts";
import type { ReportData } from "./report-data.ts";
import { REPORT_CSS } from "./report-style.ts";
import { renderChart } from "./svg-plot.ts";

/** The page's policy: no script, no fetch of any kind, only the style sheet below. */
export const REPORT_CSP = `default-src 'none'; style-src 'sha256-${createHash("sha256").update(REPORT_CSS).digest("base64")}'; img-src 'none'; base-uri 'none'; form-action 'none'`;

export interface ReportEntry {
  /** Where the capture came from (file name), shown in the heading. */
  source: string;
  data: ReportData;
}

export function reportHtml(entries: ReportEntry[], generated: string, version: string): string {
  const body = entries.map((e, i) => html`${section(e, i)}
`);
  return html`<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><meta http-equiv="Content-Security-Policy" content="${REPORT_CSP}"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>henrytick report — ${entries.map((e) => e.data.result.label ?? e.source).join(", ")}</title>
<style>${projectConstant(REPORT_CSS, "style")}</style></head>
<body><main>
<header class="page"><h1>Ring-down report</h1><p>${entries.length} capture${entries.length === 1 ? "" : "s"} · generated ${generated} · henrytick ${version}</p></header>
${body}
<footer>Uncertainties are expanded (k = 2, JCGM 100:2008). Edge residuals are timing errors against the fitted ring model; the period plot compares measured periods with the same model, which already includes the comparator's threshold delay.</footer>
</main></body></html>
`.text;
}

function section(e: ReportEntry, i: number): Markup {
  const d = e.data;
  const r = d.result;
  const title = r.label ? html`${r.label} <small>(${e.source})</small>` : html`${e.source}`;
  const s = r.settings;
  const rows: [string, string][] = [
    ["Q", formatMeasured(r.q, r.q_u, "").trim()],
    ["ESR at f0", formatMeasured(r.esr_ohm, r.esr_u_ohm, "Ω")],
    ["f0 (undamped)", formatMeasured(r.f0_hz, r.f0_u_hz, "Hz")],
    ["ring amplitude", formatSi(r.ring_amplitude_v, "V", 3)],
    ["edges", `${r.edges_used} used${r.edges_rejected ? `, ${r.edges_rejected} set aside` : ""}`],
    ["tank", `${formatSi(s.tank_c_f, "F", 4)} ${s.calibration?.tank_calibrated ? "calibrated" : "nominal"}`],
    ["thresholds", `${formatSi(s.thresholds_v[0], "V", 3)} rising, ${formatSi(s.thresholds_v[1], "V", 3)} falling`],
    ["timer", formatSi(s.tick_hz, "Hz", 4)],
  ];
  if (d.drift) rows.push(["frequency drift", `${(d.drift.df_rel * 100).toFixed(3)} % ± ${(d.drift.df_rel_u * 100).toFixed(3)} % (strong → weak half)`]);
  if (r.device?.id) rows.push(["tester", `${r.device.id}${r.device.firmware_version ? `, firmware ${r.device.firmware_version}` : ""}`]);
  const warnings = r.warnings.length
    ? html`<ul class="warnings">${r.warnings.map((w) => html`<li><b>${w.code}</b>: ${w.message}</li>`)}</ul>`
    : "";
  return html`<section class="capture" id="capture-${i + 1}">
<h2>${title}</h2>
<div class="headline">${formatMeasured(r.inductance_h, r.inductance_u_h, "H")} <small>k = 2</small></div>
<table class="figures">${rows.map(([k, v]) => html`<tr><td>${k}</td><td>${v}</td></tr>`)}</table>
${warnings}
${ringFigure(d, i)}
${residualFigure(d, i)}
${periodFigure(d, i)}
${budgetFigure(d, i)}
</section>`;
}

function timeScale(end_s: number): { scale: number; unit: string } {
  return end_s < 2e-3 ? { scale: 1e6, unit: "µs" } : { scale: 1e3, unit: "ms" };
}

function ringFigure(d: ReportData, i: number): Markup {
  const end = d.detail_end_s;
  const ts = timeScale(end);
  const inWindow = d.edges.filter((e) => e.t_s <= end);
  const neg = d.ring.envelope_v.map((v) => -v);
  const chart = renderChart({
    id: `ring-${i}`,
    title: "Edges on the reconstructed ring",
    x: { label: `time since the switch opened (${ts.unit})`, min: 0, max: end, scale: ts.scale },
    y: { label: "ring voltage (V)" },
    series: [
      { kind: "line", xs: d.ring.t_s, ys: d.ring.envelope_v, cls: "envelope", name: "envelope" },
      { kind: "line", xs: d.ring.t_s, ys: neg, cls: "envelope" },
      { kind: "line", xs: d.ring.t_s, ys: d.ring.v_v, cls: "ring", name: "fitted ring" },
      { kind: "points", xs: inWindow.filter((e) => e.used).map((e) => e.t_s), ys: inWindow.filter((e) => e.used).map((e) => e.level_v), cls: "edge", name: "edges" },
      { kind: "points", xs: inWindow.filter((e) => !e.used).map((e) => e.t_s), ys: inWindow.filter((e) => !e.used).map((e) => e.level_v), cls: "reject", name: "set aside" },
    ],
    hlines: [{ y: d.thresholds_v[0], label: "rising threshold" }, { y: d.thresholds_v[1], label: "falling threshold" }],
  });
  return html`<figure>${chart}<figcaption>The first cycles of the ring as the fit reconstructs it, with its decaying envelope. Each comparator edge sits where the ring crosses a threshold; the crossings come late by asin(V/A)/ω as the ring decays.</figcaption></figure>`;
}

function residualFigure(d: ReportData, i: number): Markup {
  const end = d.edges.length ? d.edges[d.edges.length - 1].t_s : 1;
  const ts = timeScale(end);
  const used = d.edges.filter((e) => e.used && Number.isFinite(e.residual_s));
  const rej = d.edges.filter((e) => !e.used && Number.isFinite(e.residual_s));
  const chart = renderChart({
    id: `resid-${i}`,
    title: "Fit residuals over time",
    x: { label: `time (${ts.unit})`, min: 0, scale: ts.scale },
    y: { label: "edge timing residual (ns)", scale: 1e9 },
    series: [
      { kind: "points", xs: used.map((e) => e.t_s), ys: used.map((e) => e.residual_s), cls: "edge", name: "used" },
      { kind: "points", xs: rej.map((e) => e.t_s), ys: rej.map((e) => e.residual_s), cls: "reject", name: "set aside" },
    ],
    hlines: [{ y: 0, label: "" }],
  });
  return html`<figure>${chart}<figcaption>Timing error of every edge against the fitted model. A random scatter that widens toward the end of the ring (where the slope at the threshold is small) is expected; a pattern means the model does not describe the ring.</figcaption></figure>`;
}

function periodFigure(d: ReportData, i: number): Markup {
  if (d.periods.length < 2) return html``;
  const rise = d.periods.filter((p) => p.rising);
  const fall = d.periods.filter((p) => !p.rising);
  const modelRise = rise.slice().sort((a, b) => a.amplitude_v - b.amplitude_v);
  const modelFall = fall.slice().sort((a, b) => a.amplitude_v - b.amplitude_v);
  // The faintest cycles scatter widely (small slope at the threshold); keep the axis on the bulk.
  const sorted = d.periods.map((p) => p.period_s).sort((a, b) => a - b);
  const q = (f: number) => sorted[Math.min(sorted.length - 1, Math.floor(f * (sorted.length - 1)))];
  const spread = q(0.9) - q(0.1) || Math.abs(q(0.5)) * 1e-4;
  const chart = renderChart({
    id: `period-${i}`,
    title: "Period against amplitude",
    x: { label: "ring amplitude (V, logarithmic)", log: true },
    y: { label: "period (µs)", scale: 1e6, min: q(0.1) - 2 * spread, max: q(0.9) + 2 * spread },
    series: [
      { kind: "points", xs: rise.map((p) => p.amplitude_v), ys: rise.map((p) => p.period_s), cls: "rise", name: "rising edges" },
      { kind: "points", xs: fall.map((p) => p.amplitude_v), ys: fall.map((p) => p.period_s), cls: "fall", name: "falling edges" },
      { kind: "line", xs: modelRise.map((p) => p.amplitude_v), ys: modelRise.map((p) => p.model_period_s), cls: "model", name: "model" },
      { kind: "line", xs: modelFall.map((p) => p.amplitude_v), ys: modelFall.map((p) => p.model_period_s), cls: "model" },
    ],
  });
  return html`<figure>${chart}<figcaption>Time between like edges against the ring amplitude at that moment. The model line bends only through the threshold delay; measured periods that walk away from it as the ring decays mean the frequency drifts with amplitude (a voltage-dependent tank capacitor, a saturating core).</figcaption></figure>`;
}

function budgetFigure(d: ReportData, i: number): Markup {
  const items = d.budget.map((b) => ({ name: b.name, v: b.rel_u }));
  items.push({ name: "combined", v: Math.sqrt(items.reduce((s, b) => s + b.v * b.v, 0)) });
  const W = 760;
  const rowH = 30;
  const H = 40 + rowH * items.length + 24;
  const left = 150;
  const max = Math.max(...items.map((b) => b.v)) * 1.25 || 1;
  const pw = W - left - 20;
  const bars = items.map((b, k) => {
    const y = 36 + k * rowH;
    const w = Math.max(1, (b.v / max) * pw);
    return html`<text class="bar-label" x="${left - 8}" y="${y + 14}" text-anchor="end">${b.name}</text>\
<rect class="bar${b.name === "combined" ? " total" : ""}" x="${left}" y="${y}" width="${w.toFixed(1)}" height="20"/>\
<text class="bar-value" x="${(left + w + 6).toFixed(1)}" y="${y + 14}">${(b.v * 100).toPrecision(2)} %</text>`;
  });
  const svg = html`<svg xmlns="http://www.w3.org/2000/svg" class="chart" viewBox="0 0 ${W} ${H}" width="${W}" height="${H}" role="img" aria-label="Uncertainty budget">\
<rect class="plot-bg" x="${left}" y="28" width="${pw}" height="${rowH * items.length + 8}"/>\
<text class="chart-title" x="${left}" y="20">Uncertainty budget of L (standard, relative)</text>${bars}\
<text class="tick" x="${left}" y="${H - 6}">expanded (k = 2): ${((2 * items[items.length - 1].v) * 100).toPrecision(2)} %</text></svg>`;
  return html`<figure>${svg}<figcaption>Relative standard uncertainties combined in quadrature (JCGM 100:2008). A long tank bar means calibrating the tank capacitance would help most.</figcaption></figure>`;
}
