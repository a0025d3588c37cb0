// The report page: self-contained, and it renders in a real browser. The browser check runs
// headless Chromium (Debian package `chromium`) through playwright-core; without the package it
// is skipped with the reason in its title.

import { existsSync, mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { inflateSync } from "node:zlib";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { measurePart } from "../measure/measure-part.ts";
import { estimateFromReading } from "../ranging/estimate.ts";
import { openTester } from "../open-tester.ts";
import type { CaptureV1 } from "../capture/capture-file.ts";
import { buildReport } from "./write-report.ts";
import { logTicks, niceTicks } from "./svg-plot.ts";

const CHROMIUM = "/usr/bin/chromium";
const HAS_CHROMIUM = existsSync(CHROMIUM);
const dir = mkdtempSync(join(tmpdir(), "henrytick-report-"));
let html = "";
let file = "";

/** An automatically ranged capture; `strong` then re-measures on 100 Ω with 100 nF, a ring of a few volts. */
async function capture(scenario: string, strong = false): Promise<CaptureV1> {
  const t = await openTester({ scenario });
  try {
    const first = await measurePart(t.client);
    if (!strong) return first.capture;
    const estimate = estimateFromReading(t.client.profile, first.settings, first.analysis);
    // The drift is large enough that measurePart refuses the reading (CORE_SATURATING); the
    // report shows such a capture, so it is kept on request.
    return (await measurePart(t.client, { drive: 1, tank: 2, estimate, keep_suspect: true })).capture;
  } finally {
    await t.close();
  }
}

beforeAll(async () => {
  const caps = [
    { source: "choke.json", capture: await capture("drawer-choke-330u") },
    // Automatic ranging steps down to a gentle ring on a class II tank; a stronger one shows its drift.
    { source: "x7r.json", capture: await capture("x7r-tank-mixup", true) },
  ];
  html = buildReport(caps, "2026-01-01T00:00:00Z").html;
  file = join(dir, "report.html");
  writeFileSync(file, html);
});

describe("report page", () => {
  it("is self-contained: no scripts, no external resources", () => {
    expect(html).not.toMatch(/<script|<link|<img|@import|url\(http/i);
    const urls = html.match(/https?:\/\/[^\s"'<>]+/g) ?? [];
    expect(urls.every((u) => u === "http://www.w3.org/2000/svg")).toBe(true);
  });

  it("has four charts per capture, the headline value and the warnings of the class II tank", () => {
    expect(html.match(/<svg /g)?.length).toBe(8);
    for (const t of ["Edges on the reconstructed ring", "Fit residuals over time", "Period against amplitude", "Uncertainty budget"]) {
      expect(html.split(`>${t}`).length - 1).toBe(2);
    }
    expect(html).toContain("FREQUENCY_DRIFT");
    expect(html).toMatch(/3\d\d\.\d µH ± \d\.\d µH/);
  });

  it("ticks fall on 1-2-5 steps", () => {
    expect(niceTicks(0, 10, 5)).toEqual([0, 2, 4, 6, 8, 10]);
    expect(niceTicks(-0.013, 0.041, 6)).toEqual([-0.01, 0, 0.01, 0.02, 0.03, 0.04]);
    expect(logTicks(0.03, 3)).toEqual([0.05, 0.1, 0.2, 0.5, 1, 2]);
  });
});

describe(HAS_CHROMIUM ? "report in headless Chromium" : "report in headless Chromium — SKIPPED: Debian package chromium is not installed (no /usr/bin/chromium)", () => {
  // eslint-disable-next-line @typescript-eslint/no-explicit-any
  let browser: any;
  afterAll(async () => browser?.close());

  it.skipIf(!HAS_CHROMIUM)("renders every chart with visible marks and a non-blank screenshot", async () => {
    const { chromium } = await import("playwright-core");
    browser = await chromium.launch({
      executablePath: CHROMIUM,
      args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run"],
    });
    const page = await browser.newPage({ viewport: { width: 900, height: 1400 } });
    await page.goto(`file://${file}`);
    expect(await page.locator("svg.chart").count()).toBe(8);
    const boxes = await page.locator("svg.chart").evaluateAll((els: Element[]) => els.map((e) => e.getBoundingClientRect().width * e.getBoundingClientRect().height));
    expect(boxes.every((a: number) => a > 10_000)).toBe(true);
    expect(await page.locator("polyline.ring").count()).toBe(2);
    expect(await page.locator("circle.edge").count()).toBeGreaterThan(100);
    const png: Buffer = await page.locator("#capture-1").screenshot();
    const stats = pngColourStats(png);
    // Ink on paper: many pixels differ from the page colour, and the ring's teal is present.
    expect(stats.nonBackground / stats.pixels).toBeGreaterThan(0.03);
    expect(stats.tealish).toBeGreaterThan(500);
  });
});

/** Minimal PNG reader (8-bit RGB/RGBA, not interlaced: what Chromium writes) for pixel counts. */
function pngColourStats(png: Buffer): { pixels: number; nonBackground: number; tealish: number } {
  let pos = 8;
  let width = 0, height = 0, channels = 0;
  const idat: Buffer[] = [];
  while (pos < png.length) {
    const len = png.readUInt32BE(pos);
    const type = png.toString("ascii", pos + 4, pos + 8);
    const data = png.subarray(pos + 8, pos + 8 + len);
    if (type === "IHDR") {
      width = data.readUInt32BE(0);
      height = data.readUInt32BE(4);
      channels = data[9] === 6 ? 4 : 3;
      expect(data[8]).toBe(8);
      expect(data[12]).toBe(0);
    } else if (type === "IDAT") idat.push(data);
    pos += 12 + len;
  }
  const raw = inflateSync(Buffer.concat(idat));
  const stride = width * channels;
  const img = Buffer.alloc(height * stride);
  for (let y = 0; y < height; y++) {
    const f = raw[y * (stride + 1)];
    for (let x = 0; x < stride; x++) {
      const a = x >= channels ? img[y * stride + x - channels] : 0;
      const b = y > 0 ? img[(y - 1) * stride + x] : 0;
      const c = x >= channels && y > 0 ? img[(y - 1) * stride + x - channels] : 0;
      const v = raw[y * (stride + 1) + 1 + x];
      const p = a + b - c;
      const pred = f === 0 ? 0 : f === 1 ? a : f === 2 ? b : f === 3 ? (a + b) >> 1 : Math.abs(p - a) <= Math.abs(p - b) && Math.abs(p - a) <= Math.abs(p - c) ? a : Math.abs(p - b) <= Math.abs(p - c) ? b : c;
      img[y * stride + x] = (v + pred) & 0xff;
    }
  }
  let nonBackground = 0, tealish = 0;
  for (let i = 0; i < img.length; i += channels) {
    const r = img[i], g = img[i + 1], b = img[i + 2];
    if (Math.abs(r - 0xff) + Math.abs(g - 0xfd) + Math.abs(b - 0xf8) > 60) nonBackground++;
    if (r < 80 && g > 70 && g < 140 && b > 90 && b < 160) tealish++;
  }
  return { pixels: width * height, nonBackground, tealish };
}
