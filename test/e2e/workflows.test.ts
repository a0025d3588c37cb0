// End to end: the bench workflows through the built CLI on the simulated tester — sorting with
// parts inside, outside and near the limits, logs that survive a kill, stepping on Enter,
// winding advice, continuous reading, reports, and snapshots of the help and a session's output.
// Sessions are driven by a simulated tray of parts or by piped stdin; nothing waits on a TTY.

import { spawn, spawnSync } from "node:child_process";
import { existsSync, mkdirSync, mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import ts from "typescript";
import { describe, expect, it } from "vitest";
import { decideConformity } from "../../host/src/workflows/conformity.ts";
import { windingAdvice } from "../../host/src/workflows/winding.ts";
import { CSV_COLUMNS } from "../../host/src/workflows/sort-log.ts";
import { CLI, runCli } from "./run-cli.ts";

const tmp = mkdtempSync(join(tmpdir(), "henrytick-workflows-"));
// Never the user's calibration profiles: the CLI children inherit an empty config directory.
process.env.HENRYTICK_CONFIG_DIR = join(tmp, "config-none");
process.env.XDG_CONFIG_HOME = join(tmp, "xdg-unused");
// Nominal 10 µH ±5 %: well inside, on the upper limit, far above, just inside the lower
// limit (within U of it), far below.
const TRAY = "10u,10.5u,11.5u,9.55u,8u";

function runWithInput(args: string[], input: string) {
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: "utf8", input, timeout: 120_000, env: { ...process.env, NO_COLOR: "1" } });
  return { status: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
}

const withoutTime = (line: string) => line.split(",").filter((_, i) => i !== 1).join(",");

describe("henrytick sort on the simulated tester", () => {
  it("classifies parts inside, outside and near the limits per ISO 14253-1 and logs each one", () => {
    const base = join(tmp, "lot1");
    const r = runCli(["sort", "--sim", "--nominal", "10u", "--tol", "5%", "--sim-tray", TRAY, "--lot", "L1", "--log", base, "--json", "--settle", "1"]);
    expect(r.status, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    const decisions = out.parts.map((p: { decision: string }) => p.decision);
    expect(decisions).toEqual(["conforming", "inconclusive", "nonconforming", "inconclusive", "nonconforming"]);
    for (const p of out.parts) {
      expect(p.decision).toBe(decideConformity(p.inductance_h, p.inductance_u_h, { lower: 9.5e-6, upper: 10.5e-6 }).decision);
      expect(p.lot).toBe("L1");
    }
    expect(out.summary.tally).toMatchObject({ conforming: 1, inconclusive: 2, nonconforming: 2 });
    expect(out.summary.stats.n).toBe(5);
    expect(out.summary.stats.cpk).toBeLessThan(out.summary.stats.cp);
    const csv = readFileSync(`${base}.csv`, "utf8").trimEnd().split("\n");
    expect(csv[0]).toBe(CSV_COLUMNS.join(","));
    expect(csv.length).toBe(6);
    const jsonl = readFileSync(`${base}.jsonl`, "utf8").trimEnd().split("\n").map((l) => JSON.parse(l));
    expect(jsonl.map((p) => p.decision)).toEqual(decisions);
    // Detection from the ring: the stderr story shows every removal.
    expect(r.stderr.match(/part removed/g)?.length).toBe(5);
    expect(r.stderr).toMatch(/caution: every part is pulsed repeatedly/);
  });

  it("prints CSV rows with --csv and steps on Enter lines from stdin (q finishes)", () => {
    const base = join(tmp, "enter");
    const r = runWithInput(["sort", "--sim", "--nominal", "10uJ", "--sim-tray", TRAY, "--trigger", "enter", "--log", base, "--csv"], "\n\n\nq\n");
    expect(r.status, r.stderr).toBe(0);
    const rows = r.stdout.trimEnd().split("\n");
    expect(rows[0]).toBe(CSV_COLUMNS.join(","));
    expect(rows.length).toBe(4);
    expect(rows.slice(1).map((l) => l.split(",")[6])).toEqual(["conforming", "inconclusive", "nonconforming"]);
  });

  it("stops at end of input in Enter mode and after --count parts in ring mode", () => {
    const a = runWithInput(["sort", "--sim", "--nominal", "10u", "--tol", "J", "--sim-tray", TRAY, "--trigger", "enter", "--log", join(tmp, "eof"), "--json"], "\n");
    expect(JSON.parse(a.stdout).parts.length).toBe(1);
    const b = runCli(["sort", "--sim", "--nominal", "10u", "--tol", "J", "--count", "2", "--log", join(tmp, "count"), "--json"]);
    expect(JSON.parse(b.stdout).parts.length).toBe(2);
  });

  it("refuses bad arguments with exit status 2 and a next step", () => {
    const a = runCli(["sort", "--sim", "--tol", "5%"]);
    expect(a.status).toBe(2);
    expect(a.stderr).toMatch(/needs --nominal, e\.g\. --nominal 10u/);
    const b = runCli(["sort", "--sim", "--nominal", "10x", "--tol", "5%"]);
    expect(b.status).toBe(2);
    expect(b.stderr).toMatch(/write it like 4\.7u/);
    const c = runCli(["sort", "--sim", "--nominal", "10u"]);
    expect(c.stderr).toMatch(/needs --tol/);
  });

  it("applies the tester's calibration profile: smaller U, tank marked calibrated in the log", () => {
    const dir = join(tmp, "config-cal");
    const cal = runCli(["calibrate", "reference", "--sim", "drawer-choke-330u", "--ref-h", "330u", "--ref-u-h", "0.1u", "--repeats", "1", "--config-dir", dir]);
    expect(cal.status, cal.stderr).toBe(0);
    const args = ["sort", "--sim", "--nominal", "10u", "--tol", "5%", "--sim-tray", "10u,10.45u", "--settle", "1", "--json"];
    const r = runCli([...args, "--config-dir", dir, "--log", join(tmp, "cal")]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/calibration .*calibration-HT-5EED0001\.json/);
    const parts = JSON.parse(r.stdout).parts;
    const raw = JSON.parse(runCli([...args, "--log", join(tmp, "uncal")]).stdout).parts;
    expect(parts.every((p: { tank_calibrated: boolean }) => p.tank_calibrated)).toBe(true);
    expect(parts[0].inductance_u_h).toBeLessThan(raw[0].inductance_u_h / 5);
    // 10.45 µH is within the uncalibrated U of the 10.5 µH limit but not within the calibrated one.
    expect(raw[1].decision).toBe("inconclusive");
    expect(parts[1].decision).toBe("conforming");
  });

  it("finishes cleanly on Ctrl-C (SIGINT) with the summary of the parts so far", async () => {
    const base = join(tmp, "sigint");
    const child = spawn(process.execPath, [CLI, "sort", "--sim", "--nominal", "10u", "--tol", "5%", "--count", "50", "--settle", "1", "--log", base, "--json"], { stdio: ["ignore", "pipe", "ignore"] });
    let out = "";
    child.stdout.on("data", (d) => (out += d));
    const exited = new Promise<number | null>((res) => child.on("exit", (code) => res(code)));
    while (countLines(`${base}.jsonl`) < 2) await sleep(20);
    child.kill("SIGINT");
    expect(await exited).toBe(0);
    const j = JSON.parse(out);
    expect(j.parts.length).toBeGreaterThanOrEqual(2);
    expect(j.parts.length).toBeLessThan(50);
    expect(j.summary.stats.n).toBe(j.parts.length);
    expect(countLines(`${base}.jsonl`)).toBe(j.parts.length);
  });

  it("keeps every earlier record intact when killed mid-session (at most the in-flight part lost)", async () => {
    const args = ["sort", "--sim", "--nominal", "10u", "--tol", "5%", "--sim-tray", "10u,10.2u,9.8u,10.4u,9.6u,10.1u", "--settle", "1"];
    const ref = join(tmp, "ref");
    expect(runCli([...args, "--log", ref]).status).toBe(0);
    const refCsv = readFileSync(`${ref}.csv`, "utf8").trimEnd().split("\n").map(withoutTime);
    const refJson = readFileSync(`${ref}.jsonl`, "utf8").trimEnd().split("\n").map((l) => ({ ...JSON.parse(l), time: "" }));
    expect(refCsv.length).toBe(7);
    // Kill after 1, 2 and 3 records have appeared, plus a random extra moment.
    for (const after of [1, 2, 3]) {
      const base = join(tmp, `killed-${after}`);
      const child = spawn(process.execPath, [CLI, ...args, "--log", base], { stdio: "ignore" });
      const exited = new Promise((res) => child.on("exit", res));
      while (countLines(`${base}.jsonl`) < after) await sleep(20);
      await sleep(Math.random() * 800);
      child.kill("SIGKILL");
      await exited;
      const csvText = readFileSync(`${base}.csv`, "utf8");
      const jsonText = readFileSync(`${base}.jsonl`, "utf8");
      const csv = completeLines(csvText).map(withoutTime);
      const json = completeLines(jsonText).map((l) => ({ ...JSON.parse(l), time: "" }));
      expect(csv.length).toBeGreaterThanOrEqual(after + 1);
      expect(csv).toEqual(refCsv.slice(0, csv.length));
      expect(json).toEqual(refJson.slice(0, json.length));
      // The two logs differ by at most the part being written when the kill came.
      expect(Math.abs(csv.length - 1 - json.length)).toBeLessThanOrEqual(1);
    }
  });
});

describe("henrytick wind on the simulated former", () => {
  it("advises from the N² rule after one reading and from the fit after more", () => {
    const r = runCli(["wind", "--sim", "--target", "22u", "--tol", "2%", "--turns", "30,38,43", "--json"]);
    expect(r.status, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.readings.length).toBe(3);
    const first = windingAdvice(out.readings.slice(0, 1), 22e-6);
    expect(first.recommended_turns).toBe(Math.round(30 * Math.sqrt(22e-6 / out.readings[0].inductance_h)));
    const again = windingAdvice(out.readings, 22e-6, out.limits);
    expect(out.advice.recommended_turns).toBe(again.recommended_turns);
    // A close-wound coil grows longer with every turn: the fitted exponent drops well below 2.
    expect(out.advice.model.exponent).toBeLessThan(1.6);
    expect(Math.abs(out.advice.recommended_turns - 43)).toBeLessThanOrEqual(1);
  });

  it("reads turn counts from stdin: absolute, +N, -N, q", () => {
    const r = runWithInput(["wind", "--sim", "--target", "22u", "--csv"], "30\n+8\n-1\nq\n");
    expect(r.status, r.stderr).toBe(0);
    const rows = r.stdout.trimEnd().split("\n").slice(1).map((l) => Number(l.split(",")[0]));
    expect(rows).toEqual([30, 38, 37]);
  });
});

describe("henrytick measure --watch", () => {
  it("gives one JSON line per reading with a stability verdict", () => {
    const r = runCli(["measure", "--sim", "--watch", "--count", "4", "--interval-ms", "0", "--json"]);
    expect(r.status, r.stderr).toBe(0);
    const lines = r.stdout.trimEnd().split("\n").map((l) => JSON.parse(l));
    expect(lines.map((l) => l.reading)).toEqual([1, 2, 3, 4]);
    expect(lines[0].stability).toBe("gathering");
    expect(lines[3].stability).toBe("steady");
  });

  it("prints CSV rows, and plain lines with a trend when not on a terminal", () => {
    const c = runCli(["measure", "--sim", "--watch", "--count", "2", "--interval-ms", "0", "--csv"]);
    const rows = c.stdout.trimEnd().split("\n");
    expect(rows.length).toBe(3);
    // The same columns as measure --csv, with the reading's number, time and stability in front.
    expect(rows[0]).toMatch(/^reading,time,stability,label,inductance_h,inductance_u_h,q,/);
    expect(rows[1].split(",")[0]).toBe("1");
    const p = runCli(["measure", "--sim", "--watch", "--count", "3", "--interval-ms", "0"]);
    expect(p.stdout).toMatch(/^#3 {2}\d+\.\d µH ± \d\.\d µH {2}Q \d+ at \d+(\.\d+)? kHz {2}steady {2}[▁-█]{3}$/m);
    expect(p.stdout).not.toContain("\x1b[");
    const e = runCli(["measure", "--sim", "--watch", "--count", "1", "--interval-ms", "0", "--series", "E12"]);
    expect(e.stdout).toMatch(/nearest E12 330 µH \(\+0\.\d %\)/);
    const big = runCli(["measure", "--sim", "--watch", "--count", "1", "--big", "--interval-ms", "0"]);
    expect(big.stdout).toContain("████");
  });
});

describe("henrytick report", () => {
  it("writes a self-contained page from saved captures and says where", () => {
    const cap = join(tmp, "cap.json");
    expect(runCli(["measure", "--sim", "--save", cap]).status).toBe(0);
    const out = join(tmp, "report.html");
    const r = runCli(["report", cap, "--out", out, "--json"]);
    expect(r.status, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.report).toBe(out);
    expect(j.bytes).toBeGreaterThan(10_000);
    expect(existsSync(out)).toBe(true);
    expect(j.captures[0].inductance_h).toBeGreaterThan(3e-4);
    const none = runCli(["report"]);
    expect(none.status, none.stderr).toBe(2);
  });
});

describe("CLI output snapshots", () => {
  it.each(["sort", "wind", "report"])("%s --help", (cmd) => {
    const r = runCli([cmd, "--help"]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatchSnapshot();
  });

  it("a sort session's terminal output", () => {
    const r = runCli(["sort", "--sim", "--nominal", "10u", "--tol", "5%", "--sim-tray", TRAY, "--bins", "9.8u,10.2u", "--series", "E12", "--lot", "S", "--settle", "1", "--log", join(tmp, "snap")]);
    expect(r.stdout.replaceAll(join(tmp, "snap"), "LOG")).toMatchSnapshot();
  });

  it("a winding session's terminal output", () => {
    const r = runCli(["wind", "--sim", "--target", "22u", "--tol", "2%", "--turns", "30,38,43"]);
    expect(r.stdout).toMatchSnapshot();
  });
});

function countLines(path: string): number {
  if (!existsSync(path)) return 0;
  return readFileSync(path, "utf8").split("\n").length - 1;
}

/** Lines ended by a newline; a trailing fragment (the in-flight record) is left out. */
function completeLines(text: string): string[] {
  const parts = text.split("\n");
  parts.pop();
  return parts;
}

function sleep(ms: number): Promise<void> {
  return new Promise((r) => setTimeout(r, ms));
}

describe("docs/library.md examples", () => {
  // Each ```ts block is a complete program: type-checked against the built library's
  // declarations, then run. A `// text` comment after a console.log line must appear in its output.
  const doc = readFileSync(new URL("../../docs/library.md", import.meta.url), "utf8");
  const blocks = [...doc.matchAll(/```ts\n([\s\S]*?)```/g)].map((m) => m[1]);
  const dir = fileURLToPath(new URL("../../node_modules/.cache/henrytick-doc-examples/", import.meta.url));

  it("has examples, and they type-check against the henrytick package", () => {
    expect(blocks.length).toBeGreaterThanOrEqual(5);
    mkdirSync(dir, { recursive: true });
    const files = blocks.map((code, i) => {
      const f = join(dir, `example-${i + 1}.mts`);
      writeFileSync(f, code);
      return f;
    });
    const program = ts.createProgram(files, {
      module: ts.ModuleKind.NodeNext, moduleResolution: ts.ModuleResolutionKind.NodeNext, target: ts.ScriptTarget.ES2022,
      strict: true, noEmit: true, skipLibCheck: true, types: ["node"],
    });
    const diags = ts.getPreEmitDiagnostics(program).map((d) => ts.flattenDiagnosticMessageText(d.messageText, "\n"));
    expect(diags).toEqual([]);
  });

  it.each(blocks.map((code, i) => [i + 1, code] as const))("example %i runs and prints what its comments say", (i, code) => {
    mkdirSync(dir, { recursive: true });
    const js = ts.transpileModule(code, { compilerOptions: { module: ts.ModuleKind.ESNext, target: ts.ScriptTarget.ES2022 } }).outputText;
    const f = join(dir, `example-${i}.mjs`);
    writeFileSync(f, js);
    const r = spawnSync(process.execPath, [f], { encoding: "utf8", timeout: 120_000 });
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout.length).toBeGreaterThan(0);
    for (const m of code.matchAll(/console\.log\(.*\);\s*\/\/\s*(.+)$/gm)) expect(r.stdout).toContain(m[1].trim());
  });
});
