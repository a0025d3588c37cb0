// npm run bench [-- --out FILE] [-- --only SECTION[,SECTION]]
// Runs every benchmark section, prints a table and optionally writes the figures as JSON.
// Speed and size goals are measured here, never asserted in tests.

import { writeFileSync } from "node:fs";
import { parseArgs } from "node:util";
import { sections } from "./sections/index.ts";
import type { BenchFigures } from "./sections/types.ts";

const { values } = parseArgs({ options: { out: { type: "string" }, only: { type: "string" } } });
const only = values.only ? new Set(values.only.split(",")) : null;

const figures: BenchFigures = {};
const notes: Record<string, string> = {};
for (const section of sections) {
  if (only && !only.has(section.name)) continue;
  const t0 = performance.now();
  process.stderr.write(`bench: ${section.name} ...\n`);
  const result = await section.run((m) => process.stderr.write(`bench: ${section.name}: ${m}\n`));
  Object.assign(figures, result.figures);
  if (result.notes) for (const [k, v] of Object.entries(result.notes)) notes[k] = v;
  process.stderr.write(`bench: ${section.name} done in ${((performance.now() - t0) / 1000).toFixed(1)} s\n`);
}

const width = Math.max(...Object.keys(figures).map((k) => k.length));
for (const [k, v] of Object.entries(figures)) {
  const shown = typeof v === "number" ? (Number.isInteger(v) ? String(v) : v.toPrecision(5)) : String(v);
  process.stdout.write(`${k.padEnd(width)}  ${shown}${notes[k] ? `   (${notes[k]})` : ""}\n`);
}
if (values.out) {
  writeFileSync(values.out, JSON.stringify({ date: new Date().toISOString(), node: process.version, figures, notes }, null, 2) + "\n");
  process.stderr.write(`bench: figures written to ${values.out}\n`);
}
