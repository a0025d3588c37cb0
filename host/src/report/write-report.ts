// Report files: read captures, build the page, write it atomically (fs/atomic-write.ts), so a
// browser refreshing the file never sees half a report.

import { writeFileAtomic } from "../fs/atomic-write.ts";
import { readCaptureFile } from "../capture/capture-file.ts";
import type { CaptureV1 } from "../capture/capture-file.ts";
import { reportData } from "./report-data.ts";
import { reportHtml, type ReportEntry } from "./report-html.ts";
import { packageVersion } from "../version.ts";

/** Builds the page for captures already in memory. */
export function buildReport(captures: { source: string; capture: CaptureV1 }[], generated = new Date().toISOString()): { html: string; entries: ReportEntry[] } {
  const entries = captures.map((c) => ({ source: c.source, data: reportData(c.capture) }));
  return { html: reportHtml(entries, generated, packageVersion()), entries };
}

/** Reads capture files, writes the report to `out`; returns the page's size in bytes. */
export function writeReport(files: string[], out: string): { bytes: number; entries: ReportEntry[] } {
  const { html, entries } = buildReport(files.map((f) => ({ source: f, capture: readCaptureFile(f) })));
  writeFileAtomic(out, html);
  return { bytes: Buffer.byteLength(html), entries };
}
