// The report's look: a drafting-table palette (warm paper, graphite ink, one teal for the ring,
// amber for its envelope, vermilion for edges set aside), a serif body and tabular figures.
// One style sheet for every chart, inlined so the file stands alone.

export const REPORT_CSS = `
:root { --paper:#f6f1e6; --panel:#fffdf8; --ink:#2b2a27; --faint:#8b857a; --rule:#d9d0bd;
  --ring:#17667a; --env:#c98a1b; --edge:#2b2a27; --reject:#d2452b; --model:#7a4fa0; --bar:#17667a; }
* { box-sizing: border-box; }
body { margin: 0; background: var(--paper); color: var(--ink);
  font: 15px/1.45 Georgia, "DejaVu Serif", "Times New Roman", serif; }
main { max-width: 820px; margin: 0 auto; padding: 28px 20px 60px; }
header.page { border-bottom: 3px double var(--ink); margin-bottom: 22px; }
header.page h1 { font: 600 26px/1.2 Georgia, serif; letter-spacing: .02em; margin: 0 0 4px; }
header.page p { margin: 0 0 10px; color: var(--faint); font-size: 13px; }
section.capture { background: var(--panel); border: 1px solid var(--rule); padding: 18px 20px; margin: 0 0 28px;
  box-shadow: 3px 3px 0 var(--rule); }
section.capture h2 { font: 600 19px/1.3 Georgia, serif; margin: 0 0 10px; }
.headline { font: 600 30px/1.2 "DejaVu Sans Mono", Menlo, monospace; margin: 4px 0 12px; }
.headline small { font-size: 16px; color: var(--faint); font-weight: 400; }
table.figures { border-collapse: collapse; font-variant-numeric: tabular-nums; width: 100%; margin-bottom: 10px; }
table.figures td { padding: 3px 8px 3px 0; border-bottom: 1px dotted var(--rule); vertical-align: top; }
table.figures td:first-child { color: var(--faint); width: 34%; }
ul.warnings { border-left: 4px solid var(--reject); padding: 6px 10px 6px 26px; background: #fbeee9; }
figure { margin: 18px 0 8px; }
figcaption { font-size: 13px; color: var(--faint); margin-top: 2px; }
svg.chart { width: 100%; height: auto; display: block; font-family: "DejaVu Sans", Arial, sans-serif; }
.plot-bg { fill: #fffefb; stroke: var(--ink); stroke-width: 1; }
.grid { stroke: var(--rule); stroke-width: .6; }
.tick { font-size: 10.5px; fill: var(--faint); }
.axis-label { font-size: 12px; fill: var(--ink); }
.chart-title { font-size: 13px; font-weight: 600; fill: var(--ink); }
.legend text { font-size: 10.5px; fill: var(--ink); }
.ref { stroke: var(--faint); stroke-dasharray: 2 3; }
.ref-label { font-size: 10px; fill: var(--faint); }
polyline { fill: none; }
polyline.ring { stroke: var(--ring); stroke-width: 1.4; }
polyline.envelope { stroke: var(--env); stroke-width: 1.2; stroke-dasharray: 6 4; }
polyline.model { stroke: var(--model); stroke-width: 1.6; }
circle.edge { fill: var(--edge); }
circle.reject { fill: var(--reject); }
circle.rise { fill: var(--ring); }
circle.fall { fill: var(--env); }
rect.key.ring, rect.key.rise { fill: var(--ring); } rect.key.envelope, rect.key.fall { fill: var(--env); }
rect.key.edge { fill: var(--edge); } rect.key.reject { fill: var(--reject); } rect.key.model { fill: var(--model); }
rect.bar { fill: var(--bar); } rect.bar.total { fill: var(--ink); }
.bar-label { font-size: 12px; fill: var(--ink); } .bar-value { font-size: 11px; fill: var(--faint); }
footer { color: var(--faint); font-size: 12px; border-top: 1px solid var(--rule); padding-top: 8px; }
`;
