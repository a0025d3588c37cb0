// The henrytick package as another bench application gets it: packed from this checkout,
// installed offline from the tarballs alone into an empty folder and as a global install, then
// used through its public API (type-checked against the shipped declarations) and through the
// installed `henrytick` binary. Needs the built checkout (`npm run build`).

import { spawnSync, type SpawnSyncOptions } from "node:child_process";
import { existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, statSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import ts from "typescript";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

const ROOT = fileURLToPath(new URL("../../", import.meta.url));
const HOST_PACKAGE = JSON.parse(readFileSync(join(ROOT, "host", "package.json"), "utf8"));
const SCENARIO = "drawer-choke-330u";

const work = mkdtempSync(join(tmpdir(), "henrytick-package-"));
const packs = join(work, "packs");
const app = join(work, "bench-app");
const globalPrefix = join(work, "global");
const configDir = join(work, "config");
let tarballs: string[] = [];

/** npm and node children without the npm_* variables of an enclosing `npm test`. */
function cleanEnv(): NodeJS.ProcessEnv {
  const env: NodeJS.ProcessEnv = {};
  for (const [k, v] of Object.entries(process.env)) if (!k.toLowerCase().startsWith("npm_")) env[k] = v;
  return { ...env, HENRYTICK_CONFIG_DIR: configDir, NO_COLOR: "1" };
}

function run(cmd: string, args: string[], opts: SpawnSyncOptions = {}) {
  const r = spawnSync(cmd, args, { encoding: "utf8", env: cleanEnv(), timeout: 180_000, ...opts });
  if (r.error) throw r.error;
  return { status: r.status ?? -1, stdout: String(r.stdout), stderr: String(r.stderr) };
}

function npm(args: string[], cwd: string) {
  const r = run("npm", [...args, "--no-audit", "--no-fund", "--no-update-notifier"], { cwd });
  expect(r.status, `npm ${args.join(" ")}\n${r.stderr}`).toBe(0);
  return r;
}

/** name@version of every runtime (non-dev) dependency the lockfile pins. */
function runtimeDependencies(): string[] {
  const lock = JSON.parse(readFileSync(join(ROOT, "package-lock.json"), "utf8"));
  const out = new Set<string>();
  for (const [path, entry] of Object.entries<{ version?: string; dev?: boolean; devOptional?: boolean; link?: boolean }>(lock.packages)) {
    if (!path.startsWith("node_modules/") || entry.dev || entry.devOptional || entry.link || !entry.version) continue;
    out.add(`${path.slice(path.lastIndexOf("node_modules/") + "node_modules/".length)}@${entry.version}`);
  }
  return [...out].sort();
}

function files(dir: string, prefix = ""): string[] {
  return readdirSync(dir).flatMap((name) => {
    const rel = prefix ? `${prefix}/${name}` : name;
    return statSync(join(dir, name)).isDirectory() ? files(join(dir, name), rel) : [rel];
  });
}

beforeAll(() => {
  for (const d of [packs, app, globalPrefix, configDir]) mkdirSync(d, { recursive: true });
  const packed = npm(["pack", "-w", "host", "-w", "shared-protocol", "--pack-destination", packs, "--json"], ROOT);
  tarballs = JSON.parse(packed.stdout.slice(packed.stdout.indexOf("["))).map((p: { filename: string }) => join(packs, p.filename));
  // npm resolves the runtime dependencies from its cache; full metadata for the pinned versions
  // is put there once (from the cache when it holds it), so the installs below can be --offline:
  // nothing of henrytick's own can come from a registry.
  npm(["cache", "add", "--prefer-offline", ...runtimeDependencies()], work);
  writeFileSync(join(app, "package.json"), JSON.stringify({ name: "bench-app", version: "1.0.0", private: true, type: "module" }));
  npm(["install", "--offline", ...tarballs], app);
}, 300_000);

afterAll(() => rmSync(work, { recursive: true, force: true }));

describe("the packed henrytick package", () => {
  it("holds runtime files only: no sources, no tests, with README, LICENSE, types and the firmware image", () => {
    expect(tarballs.map((t) => t.slice(packs.length + 1)).sort()).toEqual([`henrytick-${HOST_PACKAGE.version}.tgz`, "henrytick-shared-protocol-0.1.0.tgz"]);
    const installed = join(app, "node_modules", "henrytick");
    const list = files(installed);
    expect(list.filter((f) => f.startsWith("src/") || f.endsWith(".ts") && !f.endsWith(".d.ts") || /\.test\./.test(f))).toEqual([]);
    const schemas = ["capture", "result", "calibration-profile", "scenario"].map((n) => `schemas/${n}.schema.json`);
    for (const f of ["README.md", "LICENSE", "package.json", "bin/henrytick.js", "dist/index.js", "dist/index.d.ts", "firmware/henrytick.wasm", `scenarios/${SCENARIO}.json`, ...schemas]) {
      expect(list, f).toContain(f);
    }
    expect(readFileSync(join(installed, "LICENSE"), "utf8")).toBe(readFileSync(join(ROOT, "LICENSE"), "utf8"));
    const protocol = files(join(app, "node_modules", "@henrytick", "shared-protocol"));
    // Beside the codec, the board files (the simulated tester reads them) and their schema.
    const boards = readdirSync(join(ROOT, "shared-protocol", "boards")).map((f) => `boards/${f}`);
    expect(boards).toContain("boards/reference.json");
    expect(protocol.filter((f) => !f.startsWith("dist/")).sort()).toEqual(["LICENSE", "README.md", ...boards, "package.json"].sort());
    // The checkout keeps one copy of each packed-in file: prepack's copies are gone again.
    expect(existsSync(join(ROOT, "host", "firmware"))).toBe(false);
    expect(existsSync(join(ROOT, "host", "LICENSE"))).toBe(false);
  });

  it("measures a simulated part and analyses its saved capture through the public API, type-checked against the shipped types", () => {
    const program = `
import { mkdtempSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { openTester, measurePart, writeCaptureFile, readCaptureFile, analyzeCapture, packageVersion } from "henrytick";

const file = join(mkdtempSync(join(tmpdir(), "bench-app-")), "capture.json");
const tester = await openTester({ scenario: "${SCENARIO}", seed: 2 });
try {
  const reading = await measurePart(tester.client);
  writeCaptureFile(file, reading.capture);
  const again = analyzeCapture(readCaptureFile(file));
  const out: { version: string; measured_h: number; analysed_h: number; analysed_u_h: number } = {
    version: packageVersion(), measured_h: reading.analysis.inductance_h, analysed_h: again.inductance_h, analysed_u_h: again.inductance_u_h,
  };
  console.log(JSON.stringify(out));
} finally {
  await tester.close();
}
`;
    const source = join(app, "app.mts");
    writeFileSync(source, program);
    const checker = ts.createProgram([source], {
      module: ts.ModuleKind.NodeNext, moduleResolution: ts.ModuleResolutionKind.NodeNext, target: ts.ScriptTarget.ES2022,
      strict: true, noEmit: true, types: ["node"], typeRoots: [join(ROOT, "node_modules", "@types")],
    });
    expect(ts.getPreEmitDiagnostics(checker).map((d) => ts.flattenDiagnosticMessageText(d.messageText, "\n"))).toEqual([]);
    const js = join(app, "app.mjs");
    writeFileSync(js, ts.transpileModule(program, { compilerOptions: { module: ts.ModuleKind.ESNext, target: ts.ScriptTarget.ES2022 } }).outputText);
    const r = run(process.execPath, [js], { cwd: app });
    expect(r.status, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout.trim().split("\n").pop()!);
    const part = JSON.parse(readFileSync(join(app, "node_modules", "henrytick", "scenarios", `${SCENARIO}.json`), "utf8")).part;
    expect(out.version).toBe(HOST_PACKAGE.version);
    expect(out.analysed_h).toBe(out.measured_h); // the saved capture analyses to the same reading
    // The demo part's own value, within the reading's expanded uncertainty plus the simulated
    // board's tank tolerance (the reading is uncalibrated; common bench practice, no source).
    expect(Math.abs(out.analysed_h - part.inductance_h)).toBeLessThan(out.analysed_u_h + 0.02 * part.inductance_h);
  });

  it("keeps internals out of reach: only the entry points the exports map names resolve", () => {
    const r = run(process.execPath, ["--input-type=module", "-e", `import("henrytick/dist/sim/sim-tester.js").then(() => console.log("reachable"), (e) => console.log(e.code))`], { cwd: app });
    expect(r.stdout.trim()).toBe("ERR_PACKAGE_PATH_NOT_EXPORTED");
    // The file-format schemas are public: another application resolves them by package path.
    const schema = run(process.execPath, ["--input-type=module", "-e",
      `import { createRequire } from "node:module"; import { readFileSync } from "node:fs";
       console.log(JSON.parse(readFileSync(createRequire(import.meta.url).resolve("henrytick/schemas/capture.schema.json"), "utf8")).$id)`], { cwd: app });
    expect(schema.stdout.trim(), schema.stderr).toBe("urn:henrytick:schema:capture:1");
    // The simulator and the calibration methods are subpaths of their own, not the main entry.
    const sub = run(process.execPath, ["--input-type=module", "-e",
      `const main = await import("henrytick"); const sim = await import("henrytick/sim"); const cal = await import("henrytick/calibration");
       console.log(JSON.stringify({ main: "SimTester" in main, sim: typeof sim.SimTester, cal: typeof cal.monteCarlo }))`], { cwd: app });
    expect(JSON.parse(sub.stdout.trim() || "{}"), sub.stderr).toEqual({ main: false, sim: "function", cal: "function" });
  });

  it("runs a simulated measure and an analyze through the installed binary", () => {
    const bin = join(app, "node_modules", ".bin", "henrytick");
    expect(run(bin, ["--version"], { cwd: app }).stdout.trim()).toBe(`henrytick ${HOST_PACKAGE.version}`);
    const measured = run(bin, ["measure", "--sim", SCENARIO, "--seed", "4", "--save", "cap.json", "--json"], { cwd: app });
    expect(measured.status, measured.stderr).toBe(0);
    const analysed = run(bin, ["analyze", "cap.json", "--json"], { cwd: app });
    expect(analysed.status, analysed.stderr).toBe(0);
    expect(JSON.parse(analysed.stdout).inductance_h).toBe(JSON.parse(measured.stdout).inductance_h);
  });

  it("works as a global install: the binary on PATH finds its firmware and scenarios inside the package", () => {
    npm(["install", "--global", "--prefix", globalPrefix, "--offline", ...tarballs], work);
    const bin = join(globalPrefix, "bin", "henrytick");
    expect(run(bin, ["--version"], { cwd: work }).stdout.trim()).toBe(`henrytick ${HOST_PACKAGE.version}`);
    const scenarios = run(bin, ["scenarios"], { cwd: work });
    expect(scenarios.stdout).toContain(SCENARIO);
    const measured = run(bin, ["measure", "--sim", SCENARIO, "--save", join(work, "global-cap.json"), "--json"], { cwd: work });
    expect(measured.status, measured.stderr).toBe(0);
    const analysed = run(bin, ["analyze", join(work, "global-cap.json"), "--json"], { cwd: work });
    expect(analysed.status, analysed.stderr).toBe(0);
    expect(JSON.parse(analysed.stdout).inductance_h).toBe(JSON.parse(measured.stdout).inductance_h);
  });

  it("says what to do, with a code, when the package has lost its firmware image", () => {
    rmSync(join(app, "node_modules", "henrytick", "firmware", "henrytick.wasm"));
    const r = run(join(app, "node_modules", ".bin", "henrytick"), ["measure", "--sim"], { cwd: app });
    expect(r.status).toBe(1);
    expect(r.stderr).toContain("[FIRMWARE_IMAGE_MISSING]");
    expect(r.stderr).toContain("reinstall it");
  });
});
