// The examples of the lead-nulling and change-check sections (docs/calibration.md,
// docs/user-guide.md) run as shown, in order, each section against its own fresh config
// directory; an example marked "# refused: CODE" must fail with that code. The figures the
// calibration section quotes for the simulated tester are checked against what the run prints.

import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import { CLI } from "./run-cli.ts";

const ROOT = join(dirname(fileURLToPath(import.meta.url)), "..", "..");

/** The text from the heading `from` to the next heading of the same or a higher level. */
function section(file: string, from: string): string {
  const text = readFileSync(join(ROOT, file), "utf8");
  const start = text.indexOf(from + "\n");
  expect(start, `${file}: heading "${from}"`).toBeGreaterThanOrEqual(0);
  const level = from.match(/^#+/)![0].length;
  const rest = text.slice(start + from.length);
  const next = rest.search(new RegExp(`\\n#{1,${level}} `));
  return next < 0 ? rest : rest.slice(0, next);
}

/** Command lines of the fenced blocks that run on the simulated tester. */
function examples(text: string): { args: string[]; refused?: string }[] {
  const out: { args: string[]; refused?: string }[] = [];
  for (const block of text.matchAll(/```\n([\s\S]*?)```/g)) {
    for (const line of block[1].split("\n")) {
      const m = line.match(/^henrytick (.*?)\s*(?:#\s*refused: ([A-Z_]+))?$/);
      if (m && / --sim\b/.test(m[1])) out.push({ args: m[1].split(/\s+/), refused: m[2] });
    }
  }
  return out;
}

function runAll(list: { args: string[]; refused?: string }[]) {
  const dir = mkdtempSync(join(tmpdir(), "henrytick-doc-null-"));
  return list.map((ex) => {
    const r = spawnSync(process.execPath, [CLI, ...ex.args, "--config-dir", dir], { encoding: "utf8", timeout: 120_000, input: "" });
    return { ex, status: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
  });
}

function expectAsShown(runs: ReturnType<typeof runAll>) {
  for (const r of runs) {
    const shown = `henrytick ${r.ex.args.join(" ")}`;
    if (r.ex.refused) {
      expect(r.status, shown).not.toBe(0);
      expect(r.stderr, shown).toContain(`[${r.ex.refused}]`);
    } else {
      expect(r.status, `${shown}\n${r.stderr}`).toBe(0);
    }
  }
}

describe("lead nulling and change check examples run as shown", () => {
  it("docs/calibration.md, clips shorted: runs, and prints the figures the text quotes", () => {
    const text = section("docs/calibration.md", "### Clips shorted → the leads' own inductance (lead nulling)");
    const list = examples(text);
    expect(list.length).toBe(2);
    const runs = runAll(list);
    expectAsShown(runs);
    expect(text).toMatch(/leads read 30\.13 nH ± 0\.40 nH \(k = 2\)/);
    expect(runs[0].stdout).toMatch(/leads: 30\.13 nH ± 0\.40 nH \(k = 2\)/);
    expect(text).toMatch(/reads 1\.225 µH before and 1\.195 µH after/);
    expect(runs[1].stdout).toMatch(/inductance {3}1\.195 µH/);
  });

  it("docs/calibration.md, the change check", () => {
    const list = examples(section("docs/calibration.md", "### The change check"));
    expect(list.map((e) => e.refused ?? "")).toEqual(["", "CALIBRATION_SHIFT", ""]);
    expectAsShown(runAll(list));
  });

  it("docs/user-guide.md, leads and the change check", () => {
    const list = examples(section("docs/user-guide.md", "## Leads and the calibration change check"));
    expect(list.length).toBe(2);
    expectAsShown(runAll(list));
  });
});
