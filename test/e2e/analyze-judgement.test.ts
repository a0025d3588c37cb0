// `henrytick analyze` on a saved capture prints what `measure` printed (docs/capture-format.md):
// the part-fault judgement comes from what the capture records (the tester's clamp and window),
// and the warnings automatic ranging added are saved with it. Through the built CLI: a
// saturating core kept on request (suspect), and a part so damped that ranging keeps a setting
// with few edges (FEW_EDGES_BEST_SETTING). Needs the built checkout (`npm run build`).

import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { judgeCapture } from "../../host/src/measure/measure-part.ts";
import { parseCapture } from "../../host/src/capture/capture-file.ts";
import { loadScenario } from "../../host/src/sim/scenario.ts";
import { runCli } from "./run-cli.ts";

const dir = mkdtempSync(join(tmpdir(), "henrytick-analyze-judgement-"));
function scenario(name: string, part: object, seed: number): string {
  const file = join(dir, `${name}.json`);
  writeFileSync(file, JSON.stringify({ format: "henrytick-scenario", version: 1, name, story: "test part", part, seed }));
  return file;
}
// The powder-toroid-47u demo part on a fixed strong setting (100 ohm, 100 nF), where its core
// saturates (as in measure-suspect.test.ts); and 1 mH with 300 ohm of winding resistance, which
// rings only a few cycles on any setting (invented demo values).
const toroid = scenario("toroid-driven", loadScenario("powder-toroid-47u").part, loadScenario("powder-toroid-47u").seed);
const damped = scenario("damped-1m", { inductance_h: 1e-3, series_ohm: 300 }, 3);

function measureThenAnalyze(args: string[], capture: string) {
  const measured = runCli([...args, "--save", capture, "--json"]);
  expect(measured.status, measured.stderr).toBe(0);
  const analysed = runCli(["analyze", capture, "--json"]);
  expect(analysed.status, analysed.stderr).toBe(0);
  return { measured: JSON.parse(measured.stdout), analysed: JSON.parse(analysed.stdout) };
}

describe("analyze judges a saved capture as measure judged the reading", () => {
  it("a suspect reading kept on request reads as suspect again, the whole result identical", () => {
    const capture = join(dir, "suspect.json");
    const { measured, analysed } = measureThenAnalyze(["measure", "--sim", toroid, "--drive", "1", "--tank", "2", "--keep-suspect"], capture);
    expect(measured.suspect.code).toBe("CORE_SATURATING");
    expect(analysed).toEqual(measured);
    const human = runCli(["analyze", capture]);
    expect(human.status).toBe(0);
    expect(human.stdout).toMatch(/SUSPECT/);
    // The library path: the same judgement, and a refusal without keep_suspect.
    const c = parseCapture(readFileSync(capture, "utf8"));
    expect(judgeCapture(c, undefined, { keep_suspect: true }).suspect?.code).toBe("CORE_SATURATING");
    expect(() => judgeCapture(c)).toThrow(expect.objectContaining({ code: "CORE_SATURATING" }));
  });

  it("the warning automatic ranging added is saved with the capture and comes back under analyze", () => {
    const capture = join(dir, "damped.json");
    const { measured, analysed } = measureThenAnalyze(["measure", "--sim", damped], capture);
    expect(measured.warnings.map((w: { code: string }) => w.code)).toContain("FEW_EDGES_BEST_SETTING");
    expect(analysed).toEqual(measured);
    expect(JSON.parse(readFileSync(capture, "utf8")).reading_warnings.map((w: { code: string }) => w.code)).toEqual(["FEW_EDGES_BEST_SETTING"]);
  });

  it("a clean reading stays clean and identical", () => {
    const { measured, analysed } = measureThenAnalyze(["measure", "--sim", "--seed", "5"], join(dir, "clean.json"));
    expect(measured.suspect).toBeUndefined();
    expect(analysed).toEqual(measured);
  });
});
