// Every henrytick command shown in README.md, docs/*.md, the general help page and each
// command's help runs as shown on the simulated tester and exits 0. Fragments with placeholders
// (FILE, NAME, PATH, …) are not commands and are left out; commands that need hardware or
// serve until stopped are skipped visibly, with the reason in the title.

import { spawnSync } from "node:child_process";
import { mkdirSync, mkdtempSync, readdirSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { beforeAll, describe, expect, it } from "vitest";
import { CLI } from "./run-cli.ts";

const root = fileURLToPath(new URL("../../", import.meta.url));

function fromMarkdown(file: string): string[] {
  const out: string[] = [];
  let inCode = false;
  for (const line of readFileSync(join(root, file), "utf8").split("\n")) {
    if (/^```/.test(line)) {
      inCode = !inCode;
      continue;
    }
    if (inCode) {
      // A trailing "# refused: CODE" says the example shows a refusal: it must exit 1 with that code.
      const m = /^\s*(?:\$ )?((?:npx )?henrytick\s.*?)(\s+#.*)?$/.exec(line);
      if (m) out.push(m[1] + (/# refused: [A-Z_]+/.exec(m[2] ?? "")?.[0].replace("# ", " #") ?? ""));
    } else for (const m of line.matchAll(/`((?:npx )?henrytick [^`]*)`/g)) out.push(m[1]);
  }
  return out;
}

function fromHelp(args: string[]): string[] {
  const text = spawnSync(process.execPath, [CLI, ...args], { encoding: "utf8" }).stdout;
  const out: string[] = [];
  let inExamples = false;
  for (const line of text.split("\n")) {
    if (/^Examples:|^Bench workflows/.test(line)) inExamples = true;
    else if (/^\S/.test(line)) inExamples = false;
    else if (inExamples) {
      const m = /^\s+(henrytick .*?)(?:\s{3,}\S.*)?$/.exec(line);
      if (m) out.push(m[1]);
    }
  }
  return out;
}

const topics = ["measure", "analyze", "profile", "advise", "scenarios", "ports", "sort", "wind", "report", "sim-device", "calibrate",
  "calibrate show", "calibrate reference", "calibrate parallel", "calibrate thresholds", "calibrate skew", "calibrate timebase", "calibrate open", "calibrate restore"];
const sources: [string, string[]][] = [
  ["README.md", fromMarkdown("README.md")],
  ...readdirSync(join(root, "docs")).filter((f) => f.endsWith(".md")).map((f) => [`docs/${f}`, fromMarkdown(`docs/${f}`)] as [string, string[]]),
  ["henrytick --help", fromHelp(["--help"])],
  ...topics.map((t) => [`henrytick ${t} --help`, fromHelp([...t.split(" "), "--help"])] as [string, string[]]),
];

/** A placeholder or an elision: the text names a command's shape, not a command. */
const PLACEHOLDER = /…|\.\.\.|\b[A-Z][A-Z_]{2,}\b|\bN\b|<\w+>|\[|\(--sim \|/;

/** Commands that need a tester: without --sim or --port the text only names the command. */
const NEEDS_TESTER = /^henrytick (measure|profile|advise|sort|wind|calibrate \w+)\b/;

function fragment(cmd: string): boolean {
  if (NEEDS_TESTER.test(cmd) && !/--sim|--port/.test(cmd) && !/--help/.test(cmd)) return true;
  return /^henrytick (analyze|calibrate|report)$/.test(cmd);
}

function why(cmd: string): string | null {
  if (/--port\b|\bports\b/.test(cmd)) return "needs a tester on a serial port";
  if (/\bsim-device\b/.test(cmd)) return "serves a pseudo-terminal until stopped (pty-device.test.ts runs it)";
  if (/--trigger enter/.test(cmd) && !/--sim/.test(cmd)) return "needs a person pressing Enter";
  return null;
}

const seen = new Set<string>();
const cases: { where: string; cmd: string; refused?: string }[] = [];
for (const [where, list] of sources) {
  for (const raw of list) {
    const [text, note] = raw.split(" #refused: ");
    const cmd = text.replace(/^npx /, "").trim();
    if (PLACEHOLDER.test(cmd) || fragment(cmd) || seen.has(raw)) continue;
    seen.add(raw);
    cases.push({ where, cmd, refused: note });
  }
}

/** Each document (and the calibrate help pages together) keeps its own calibration profile, as one reader's session. */
const configFor = (where: string) => join(cwd, "config", where.startsWith("henrytick calibrate") ? "calibrate-help" : where.replace(/[^\w]+/g, "-"));

// One folder and one configuration for the whole run, in document order, as a reader would go:
// the captures the examples name are made first, and calibrate restore finds a previous profile.
const cwd = mkdtempSync(join(tmpdir(), "henrytick-examples-"));
const env = { ...process.env, HENRYTICK_CONFIG_DIR: join(cwd, "config"), NO_COLOR: "1" };

describe("every example in the docs and the help runs as shown (simulated tester)", () => {
  beforeAll(() => {
    mkdirSync(join(cwd, "bench"));
    for (const f of ["cap.json", "choke.json", "c.json", "bench/a.json"]) {
      expect(spawnSync(process.execPath, [CLI, "measure", "--sim", "--save", f], { cwd, env }).status).toBe(0);
    }
  });

  it("finds the examples", () => {
    expect(cases.length).toBeGreaterThan(30);
  });

  for (const { where, cmd, refused } of cases) {
    const reason = why(cmd);
    if (reason) {
      it.skip(`${cmd}  (${where}) — skipped: ${reason}`, () => {});
      continue;
    }
    it(`${cmd}  (${where})${refused ? ` — refused with ${refused}, as the document says` : ""}`, () => {
      // A session that runs until stopped (--watch without --count) gets Ctrl-C after a while, and
      // one that reads the keyboard an empty input, as a person would give them.
      const env = { ...process.env, HENRYTICK_CONFIG_DIR: configFor(where), NO_COLOR: "1" };
      const shell = /&&|\||>|\*/.test(cmd);
      const r = shell
        ? spawnSync("sh", ["-c", cmd.replace(/\bhenrytick\b/g, `"${process.execPath}" "${CLI}"`)], { cwd, env, encoding: "utf8", input: "", timeout: 20_000 })
        : spawnSync(process.execPath, [CLI, ...cmd.split(/\s+/).slice(1)], { cwd, env, encoding: "utf8", input: "", timeout: /--watch/.test(cmd) && !/--count/.test(cmd) ? 4_000 : 20_000, killSignal: "SIGINT" });
      expect(r.error && (r.error as NodeJS.ErrnoException).code !== "ETIMEDOUT" ? r.error : undefined).toBeUndefined();
      if (refused) {
        expect(r.status, `${cmd}\n${r.stderr}`).toBe(1);
        expect(r.stderr).toContain(`[${refused}]`);
      } else expect(r.status, `${cmd}\n${r.stderr}`).toBe(0);
    }, 30_000);
  }
});
