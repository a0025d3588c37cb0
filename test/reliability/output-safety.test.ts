// What reaches the terminal and spreadsheets from hostile strings, and the exit status when the
// output cannot be written. Control sequences in labels, tester ids or messages (window title,
// clear screen, carriage return, C1 CSI, bidirectional overrides) are shown as visible stand-ins
// by one sanitiser that guards stdout and stderr; CSV text cells that start a formula are guarded
// as OWASP's "CSV Injection" page advises; `> /dev/full` is OUTPUT_FAILED, exit status 1; an
// uncoded RangeError or TypeError is an internal error (70), never the usage status 2.
// The CLI checks run the built CLI (host/dist): build before running them.

import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it, vi } from "vitest";
import { writeCaptureFile } from "../../host/src/capture/capture-file.ts";
import { CliUsageError, reportError } from "../../host/src/cli/errors.ts";
import { csvField } from "../../host/src/format/csv.ts";
import { ValueSyntaxError } from "../../host/src/values/parse-value.ts";
import { eraseUp, guardOutput, makeStyle, sanitizeForTerminal } from "../../host/src/workflows/terminal.ts";
import { CLI, runCli } from "../e2e/run-cli.ts";
import { captureFor } from "./data-safety/records.ts";

const dir = mkdtempSync(join(tmpdir(), "henrytick-output-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Hostile terminal strings: each would act on a terminal if printed raw. */
export const TERMINAL_PAYLOADS = [
  "\x1b]0;owned title\x07", // OSC: window title
  "\x1b]52;c;cGF5bG9hZA==\x07", // OSC 52: write the clipboard
  "\x1b[2J\x1b[H", // clear screen, home
  "\x1b[31mred\x1b[0m", // SGR: a colour the program did not choose
  "\x1b[3F\x1b[J", // the program's own redraw sequence, from a file
  "ok\rFAIL", // carriage return overwrites what came before
  "\x9b2J", // C1 CSI
  "abc\u202edcba", // right-to-left override reorders the line
  "bell\x07 nul\x00 del\x7f",
  "two\nlines", // a label is one line
];
const RAW_CONTROL = /[\x00-\x08\x0b-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]/;

describe("terminal sanitiser", () => {
  it.each(TERMINAL_PAYLOADS)("leaves no control character in %j", (p) => {
    const s = sanitizeForTerminal(p, { oneLine: true });
    expect(s).not.toMatch(RAW_CONTROL);
    expect(s).not.toContain("\n");
    expect(s.length).toBeGreaterThan(0);
  });

  it("shows what was there: ESC as ␛, CR as ␍, DEL, a C1 or bidirectional control as \\uXXXX", () => {
    expect(sanitizeForTerminal("\x1b[2Jx\ry\u202ez\x9b\x7f")).toBe("␛[2Jx␍y\\u202ez\\u009b\\u007f");
    expect(sanitizeForTerminal("a\tb\nc")).toBe("a\tb\nc");
  });

  it("the output guard keeps the program's own colours and redraw, and nothing else", () => {
    const written: string[] = [];
    const fake = { isTTY: true, write: (c: string) => written.push(c) } as unknown as NodeJS.WriteStream;
    guardOutput(fake);
    guardOutput(fake); // idempotent
    const style = makeStyle(fake, {});
    fake.write(`${style.bad("FAIL")} ${style.good("pass")} ${style.dim("d")}${eraseUp(4, fake)}`);
    expect(written[0]).toBe("\x1b[31mFAIL\x1b[0m \x1b[32mpass\x1b[0m \x1b[2md\x1b[0m\x1b[4F\x1b[J");
    // The same sequences arriving in text (a label from a file) are stand-ins, like every other control.
    for (const p of TERMINAL_PAYLOADS) fake.write(`label ${p}\n`);
    for (const w of written.slice(1)) expect(w.slice(0, -1)).not.toMatch(RAW_CONTROL);
    // Unguarded, the style writes plain ESC sequences (library use, tests).
    expect(makeStyle({ isTTY: true }, {}).good("x")).toBe("\x1b[32mx\x1b[0m");
  });
});

describe("CSV cells (OWASP CSV Injection guidance)", () => {
  it.each(["=1+2", "=HYPERLINK(\"http://x\",\"y\")", "+1+cmd|' /C calc'!A0", "-2+3", "-A1", "@SUM(A1:A2)", "\tTAB", "\rCR=1"])("guards %j with a leading quote", (v) => {
    const f = csvField(v);
    const cell = f.startsWith('"') ? f.slice(1, -1).replace(/""/g, '"') : f;
    expect(cell).toBe(`'${v}`);
  });

  it("leaves numbers alone, negative ones too, and text that is one plain number", () => {
    expect(csvField(-1.5e-6)).toBe("-0.0000015");
    expect(csvField(-0.25)).toBe("-0.25");
    expect(csvField("-0.25")).toBe("-0.25");
    expect(csvField("+3.3e-6")).toBe("+3.3e-6");
    expect(csvField("coil, \"batch\" 3")).toBe('"coil, ""batch"" 3"');
    expect(csvField("-")).toBe("'-");
    expect(csvField("-1-1")).toBe("'-1-1");
  });
});

describe("exit status (docs/user-guide.md)", () => {
  function status(e: unknown): { code: number; text: string } {
    const spy = vi.spyOn(process.stderr, "write").mockImplementation(() => true);
    try {
      const code = reportError(e);
      return { code, text: spy.mock.calls.map((c) => String(c[0])).join("") };
    } finally {
      spy.mockRestore();
    }
  }

  it("usage errors are 2, coded errors 1, an uncoded RangeError or TypeError is an internal error 70", () => {
    expect(status(new CliUsageError("bad")).code).toBe(2);
    expect(status(new ValueSyntaxError("10x", "nope")).code).toBe(2);
    expect(status(Object.assign(new RangeError("10uF is a capacitance"), { code: "WRONG_UNIT" })).code).toBe(2);
    expect(status(Object.assign(new Error("no ring"), { code: "NO_RING" })).code).toBe(1);
    const range = status(new RangeError("Invalid array length"));
    expect(range.code).toBe(70);
    expect(range.text).toMatch(/internal error: RangeError: Invalid array length; please report it with .*HENRYTICK_DEBUG=1/);
    expect(status(new TypeError("x is undefined")).code).toBe(70);
  });

  it("a value the user typed that a library refuses with a RangeError is still a usage error (2)", () => {
    const tol = runCli(["sort", "--sim", "--nominal", "1u", "--tol", "2u"]);
    expect(tol.status, tol.stderr).toBe(2);
    expect(tol.stderr).toMatch(/--tol: tolerance ±2 µH reaches below zero/);
    const series = runCli(["sort", "--sim", "--nominal", "10u", "--tol", "5%", "--series", "E7"]);
    expect(series.status, series.stderr).toBe(2);
    expect(series.stderr).toMatch(/--series: unknown E-series "E7"/);
  });

  it("an error message with control characters is printed with stand-ins", () => {
    const r = status(Object.assign(new Error("capture x\x1b]0;t\x07: bad"), { code: "BAD_CAPTURE_FILE" }));
    expect(r.text).not.toMatch(/\x1b|\x07/);
    expect(r.text).toContain("␛]0;t␇");
  });

  it.each([[["scenarios"]], [["measure", "--sim", "--json"]], [["--help"]]])("%j > /dev/full is OUTPUT_FAILED with status 1, no stack trace", (args) => {
    const r = spawnSync("bash", ["-c", `exec "${process.execPath}" "${CLI}" ${args.join(" ")} > /dev/full`], { encoding: "utf8", timeout: 60_000, env: { ...process.env, HENRYTICK_CONFIG_DIR: dir } });
    expect(r.status, r.stderr).toBe(1);
    expect(r.stderr).toMatch(/\[OUTPUT_FAILED\] cannot write the output \(ENOSPC: no space left on the device\); free some space/);
    expect(r.stderr).not.toMatch(/^\s+at /m);
  });

  it("a reader that goes away (EPIPE) still ends quietly with status 0", () => {
    const r = spawnSync("bash", ["-c", `set -o pipefail; "${process.execPath}" "${CLI}" --help | head -c 10 > /dev/null; echo "\${PIPESTATUS[0]}"`], { encoding: "utf8", timeout: 60_000 });
    expect(r.stdout.trim()).toBe("0");
    expect(r.stderr).not.toMatch(/EPIPE|at /);
  });
});

describe("hostile labels through the CLI", () => {
  it("analyze prints a capture's hostile label with stand-ins only, and guards it in --csv", () => {
    const label = TERMINAL_PAYLOADS.filter((p) => !p.includes("\n")).join(" | ");
    const f = join(dir, "hostile-label.json");
    writeCaptureFile(f, { ...captureFor(3), meta: { label } });
    const human = runCli(["analyze", f]);
    expect(human.stdout + human.stderr).not.toMatch(RAW_CONTROL);
    const csv = runCli(["analyze", f, "--csv"]);
    expect(csv.stdout).not.toMatch(RAW_CONTROL);
    const f2 = join(dir, "formula-label.json");
    writeCaptureFile(f2, { ...captureFor(3), meta: { label: "=HYPERLINK(\"http://x\")" } });
    // JSON keeps the label: JSON.stringify escapes C0 controls itself, and the stand-ins of the
    // controls it leaves raw (bidirectional, C1, DEL) are JSON escapes of the same characters.
    const json = runCli(["analyze", f, "--json"]);
    expect(json.stdout).not.toMatch(RAW_CONTROL);
    expect(JSON.parse(json.stdout).label).toBe(label);
    const csv2 = runCli(["analyze", f2, "--csv"]);
    expect(csv2.stdout).toContain(`"'=HYPERLINK(""http://x"")"`);
  });
});
