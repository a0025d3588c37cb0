// The HTML report against hostile strings in capture files: labels, source names and tester ids
// that try to open script, event handlers, new elements or close the title, style or SVG. The page
// is rendered by the real code and opened in headless Chromium (Debian package `chromium`, through
// playwright-core): no script may run and no injected node may exist. A second check inserts raw
// script into a rendered page by hand, to show that the page's Content-Security-Policy alone stops
// it. Without the package the browser checks are skipped with the reason in their title.

import { existsSync, mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { CaptureV1 } from "../../host/src/capture/capture-file.ts";
import { measurePart } from "../../host/src/measure/measure-part.ts";
import { openTester } from "../../host/src/open-tester.ts";
import { html, projectConstant } from "../../host/src/report/html.ts";
import { REPORT_CSP } from "../../host/src/report/report-html.ts";
import { buildReport } from "../../host/src/report/write-report.ts";

const CHROMIUM = "/usr/bin/chromium";
const HAS_CHROMIUM = existsSync(CHROMIUM);

/** Each payload sets window.__pwned (or opens a dialog) if it ever runs. */
export const HOSTILE_STRINGS = [
  `<script>window.__pwned = "script"</script>`,
  `"><img src=x onerror="window.__pwned='img-attr'">`,
  `'><img src=x onerror='window.__pwned="img-sq"'>`,
  `</title><script>window.__pwned = "title"</script>`,
  `</style><script>window.__pwned = "style"</script>`,
  `<svg onload="window.__pwned='svg-onload'"><script>window.__pwned='svg-script'</script></svg>`,
  `</text></svg><img src=x onerror="alert(1)">`,
  `<iframe srcdoc="<script>parent.__pwned='iframe'</script>"></iframe>`,
  `<a href="javascript:window.__pwned='href'">x</a><math><mi xlink:href="javascript:alert(2)">m</mi></math>`,
  `&lt;script&gt;window.__pwned='entity'&lt;/script&gt;`,
  `<!--`,
  `<base href="http://example.invalid/"><meta http-equiv="refresh" content="0;url=javascript:alert(3)">`,
];

const INJECTED = "script, img, iframe, object, embed, base, a, math, form, input, meta[http-equiv=refresh], [onerror], [onload], [onclick], [onmouseover]";

let base: CaptureV1;
let hostileHtml = "";
const dir = mkdtempSync(join(tmpdir(), "henrytick-hostile-report-"));

function hostileCaptures(): { source: string; capture: CaptureV1 }[] {
  return HOSTILE_STRINGS.map((s, k) => ({
    source: `${s}.json`,
    capture: {
      ...base,
      meta: { ...base.meta, label: s },
      device: { id: `tester ${s}`, firmware_version: s, protocol_version: 1, transport: s },
    } as CaptureV1,
  })).concat([{ source: `plain-${HOSTILE_STRINGS.length}.json`, capture: base }]);
}

beforeAll(async () => {
  const t = await openTester({ scenario: "drawer-choke-330u" });
  try {
    base = (await measurePart(t.client)).capture;
  } finally {
    await t.close();
  }
  hostileHtml = buildReport(hostileCaptures(), "2026-01-01T00:00:00Z").html;
});

describe("report page with hostile strings (text checks)", () => {
  it("escapes every hostile string: no tag of a payload survives", () => {
    expect(hostileHtml).not.toMatch(/<(script|img|iframe|a |math|base|!--)/i);
    expect(hostileHtml).not.toMatch(/<[a-z][^>]*\son(error|load|click)=/i);
    // Four charts per capture, no svg from a payload.
    expect(hostileHtml.match(/<svg[ >]/g)?.length).toBe(4 * (HOSTILE_STRINGS.length + 1));
    expect(hostileHtml).toContain("&lt;script&gt;window.__pwned = &quot;script&quot;&lt;/script&gt;");
    // The entity payload is shown as typed, not decoded.
    expect(hostileHtml).toContain("&amp;lt;script&amp;gt;");
  });

  it("carries a Content-Security-Policy that allows no script and only the page's style sheet", () => {
    expect(hostileHtml).toContain(`<meta http-equiv="Content-Security-Policy" content="${REPORT_CSP.replace(/'/g, "&#39;")}">`);
    expect(REPORT_CSP).toMatch(/^default-src 'none'; style-src 'sha256-[A-Za-z0-9+/]+=*'/);
    expect(REPORT_CSP).not.toMatch(/unsafe|script-src|\*/);
  });

  it("the template escapes strings, numbers and arrays, and passes only Markup through", () => {
    const evil = `<b onclick="x">&'`;
    expect(html`<p title="${evil}">${evil}</p>`.text).toBe(`<p title="&lt;b onclick=&quot;x&quot;&gt;&amp;&#39;">&lt;b onclick=&quot;x&quot;&gt;&amp;&#39;</p>`);
    expect(html`<i>${[evil, html`<b>ok</b>`, 3]}</i>`.text).toBe(`<i>&lt;b onclick=&quot;x&quot;&gt;&amp;&#39;<b>ok</b>3</i>`);
    // A look-alike object is not Markup: refused, never inserted.
    expect(() => html`${{ text: "<b>" } as never}`).toThrow(TypeError);
    expect(() => projectConstant("a</style><script>", "style")).toThrow(/close <style>/);
  });
});

describe(HAS_CHROMIUM ? "hostile report in headless Chromium" : "hostile report in headless Chromium — SKIPPED: Debian package chromium is not installed (no /usr/bin/chromium)", () => {
  // eslint-disable-next-line @typescript-eslint/no-explicit-any
  let browser: any;
  beforeAll(async () => {
    if (!HAS_CHROMIUM) return;
    const { chromium } = await import("playwright-core");
    browser = await chromium.launch({
      executablePath: CHROMIUM,
      args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run"],
    });
  });
  afterAll(async () => browser?.close());

  /** Opens a page file; returns what ran, the dialogs and console errors it raised, and the DOM facts. */
  async function open(page_html: string, name: string) {
    const file = join(dir, name);
    writeFileSync(file, page_html);
    const page = await browser.newPage();
    const dialogs: string[] = [];
    const consoleErrors: string[] = [];
    page.on("dialog", async (d: { message(): string; dismiss(): Promise<void> }) => {
      dialogs.push(d.message());
      await d.dismiss();
    });
    page.on("console", (m: { type(): string; text(): string }) => {
      if (m.type() === "error") consoleErrors.push(m.text());
    });
    await page.goto(`file://${file}`);
    await page.waitForTimeout(200); // let any onerror/onload handler fire
    const facts = await page.evaluate((sel: string) => ({
      pwned: (window as unknown as { __pwned?: string }).__pwned ?? null,
      injected: document.querySelectorAll(sel).length,
      svgs: document.querySelectorAll("svg").length,
      headings: Array.from(document.querySelectorAll("section.capture h2")).map((h) => h.textContent ?? ""),
      title: document.title,
      background: getComputedStyle(document.body).backgroundColor,
      sections: document.querySelectorAll("section.capture").length,
    }), INJECTED);
    await page.close();
    return { ...facts, dialogs, consoleErrors };
  }

  it.skipIf(!HAS_CHROMIUM)("runs no script and holds no injected node; every label is shown as text", async () => {
    const r = await open(hostileHtml, "hostile.html");
    expect(r.pwned).toBeNull();
    expect(r.dialogs).toEqual([]);
    expect(r.injected).toBe(0);
    expect(r.sections).toBe(HOSTILE_STRINGS.length + 1);
    expect(r.svgs).toBe(4 * (HOSTILE_STRINGS.length + 1));
    HOSTILE_STRINGS.forEach((s, k) => expect(r.headings[k]).toBe(`${s} (${s}.json)`));
    expect(r.title).toBe(`henrytick report — ${HOSTILE_STRINGS.join(", ")}, ${base.meta?.label ?? `plain-${HOSTILE_STRINGS.length}.json`}`);
    // The style sheet is allowed by its hash: the page keeps its paper colour (#f6f1e6).
    expect(r.background).toBe("rgb(246, 241, 230)");
    // Nothing on the page needed refusing.
    expect(r.consoleErrors.filter((e) => /Content Security Policy/i.test(e))).toEqual([]);
  });

  it.skipIf(!HAS_CHROMIUM)("the Content-Security-Policy alone stops script inserted raw into a rendered page", async () => {
    const raw = hostileHtml.replace(
      "<body><main>",
      `<body><main><script>window.__pwned = "raw-script"</script><img src=x onerror="window.__pwned='raw-img'"><svg onload="alert('raw-svg')"></svg><style>body { background: rgb(1, 2, 3) }</style>`,
    );
    const r = await open(raw, "raw.html");
    expect(r.pwned).toBeNull();
    expect(r.dialogs).toEqual([]);
    expect(r.background).toBe("rgb(246, 241, 230)"); // the inserted style sheet was refused too
    expect(r.consoleErrors.some((e) => /Content Security Policy/i.test(e))).toBe(true);
  });
});
