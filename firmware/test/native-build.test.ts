// The native C build: wasm2c's translation of the release wasm, with the runtime and ports in
// firmware/ports/, must behave byte for byte like the wasm. The same scripts run on the wasm in
// scripted-port.ts and on the C build in ports/host/harness.c; the serial outputs must match.
// Needs the Debian packages wabt (wasm2c) and gcc-arm-none-eabi + libnewlib-arm-none-eabi;
// without them these tests are skipped, and say so in their names.

import { spawnSync } from "node:child_process";
import { mkdirSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { encodeCommand } from "../../host/src/device/frames.ts";
import { SimTester } from "../../host/src/sim/sim-tester.ts";
import { MEMORY_MARGIN_BYTES, firmwareMemoryUsed, memoryBacking } from "../ports/memory-size.ts";
import { NATIVE_DIR, buildArm, buildHostHarness, buildRuntimeCheck, buildTemplateHost, hasArmGcc, hasHostGcc, hasWasm2c, linearMemoryBacking } from "../ports/native-build.ts";
import { rawEntries } from "./capture-stream.ts";
import { ScriptedPort } from "./scripted-port.ts";

const canNative = hasWasm2c && hasHostGcc;
const nativeNote = canNative ? "" : " (skipped: Debian package wabt or gcc not installed)";
const armNote = canNative && hasArmGcc ? "" : " (skipped: Debian packages wabt, gcc-arm-none-eabi, libnewlib-arm-none-eabi not installed)";

const hex = (tag: string, ...a: number[]) => Buffer.from(encodeCommand(tag, a)).toString("hex");
const rawHex = (s: string) => Buffer.from(s, "latin1").toString("hex");
const ms = (...a: number[]) => `rx ${hex("MS", ...a)}`;
const MS_TICKS = 64000;

/** A real ring's edges from the simulated tester, as (write tick, entry) pairs. */
function simEdges(edgeLimit: number, seed: number): { ticks: number[]; levels: number[] } {
  const sim = new SimTester({ part: { inductance_h: 330e-6, series_ohm: 0.4, self_capacitance_f: 0 }, seed });
  sim.input(encodeCommand("MS", [1, 2, 200, edgeLimit, 1000, 2000]));
  const e = sim.lastEdges!;
  return { ticks: [...e.ticks], levels: [...e.levels] };
}

function record(kind: "capture" | "heard", at: number[], words: number[]): string {
  return `${kind} ${at.length} ${at.map((t, i) => `${t} ${words[i]}`).join(" ")}`;
}

function extendedRecord(e: { ticks: number[]; levels: number[] }): string {
  return record("capture", e.ticks, e.ticks.map((t, i) => t * 2 + e.levels[i]));
}

/** One session touching every command, refusal and interlock the scripted port can reach. */
function sessionScript(): string {
  const ring = simEdges(8192, 3);
  return [
    "id 1592590337",
    `rx ${hex("ID")}${hex("PF")}${hex("CN")}`,
    `rx ${rawHex("garbage\nID*0000\n" + "X".repeat(200) + "\n\n")}${hex("ZZ")}${hex("CR")}`,
    `rx ${hex("MS", 9, 0, 1, 1, 1, 1)}${hex("MS", 0, 0, 2001, 10, 10, 100)}`,
    extendedRecord(ring),
    ms(1, 2, 200, 8192, 1000, 2000),
    `rx ${hex("CR")}`,
    ms(0, 0, 2000, 10, 1, 100), // the longest pulse on the 10 ohm resistor...
    ms(0, 0, 2000, 10, 1, 100), // ...and another at once: refused, rest
    `idle ${25 * MS_TICKS}`,
    extendedRecord({ ticks: ring.ticks.slice(0, 40), levels: ring.levels.slice(0, 40) }),
    record("heard", [3000, 9000], [6001, 18000]), // the ring goes on after the limit
    ms(1, 2, 200, 20, 1000, 2000),
    `idle ${21 * MS_TICKS}`,
    ms(1, 2, 200, 8192, 1000, 2000), // refused: ringing
    `idle ${3 * MS_TICKS}`,
    `rx ${hex("ST")}`,
    `idle ${25 * MS_TICKS}`,
    "stuck 5000 0",
    extendedRecord({ ticks: [0, 1, 1], levels: [1, 0, 1] }),
    ms(1, 2, 200, 100, 100, 1000), // capture fault
    `idle ${25 * MS_TICKS}`,
    `rx ${hex("MS", 1, 2, 200, 100, 100, 1000)}${hex("AB")}`,
    `rx ${rawHex("I")}`,
    "overrun", // the rest of this ID line is spoilt: refused as a whole
    `rx ${hex("ID").slice(2)}`,
    `rx ${hex("CN")}`,
  ].join("\n") + "\n";
}

/** The same ring through a 16-bit raw-capture port, at a few timer phases. */
function rawScript(): string {
  const ring = simEdges(8192, 5);
  const lines = ["bits 16"];
  for (const [k, openRaw] of [0, 1, 32767, 65535, 40000].entries()) {
    const e = rawEntries(ring.ticks, ring.levels, 16, openRaw, 40, ring.ticks[ring.ticks.length - 1] + 2000 * 64);
    lines.push(record("capture", e.at, e.words), ms(1, 2, 200, 8192, 1000, 2000), `idle ${(25 + k) * MS_TICKS}`);
  }
  // A self-test that hears two stray edges among overflow markers, then the ring watch it starts.
  const stray = rawEntries([70000, 140000], [1, 0], 16, 123, 40, 20 * MS_TICKS);
  lines.push(record("heard", stray.at, stray.words), `rx ${hex("ST")}`, ms(1, 2, 200, 8192, 1000, 2000), `rx ${hex("CN")}`);
  return lines.join("\n") + "\n";
}

function writeScript(name: string, script: string): string {
  mkdirSync(NATIVE_DIR, { recursive: true });
  const file = join(NATIVE_DIR, `${name}.script`);
  writeFileSync(file, script);
  return file;
}

function runBoth(name: string, script: string): { wasm: Buffer; c: Buffer } {
  const file = writeScript(name, script);
  const wasm = Buffer.from(ScriptedPort.runScript(script).output);
  const r = spawnSync(buildHostHarness(), [file], { maxBuffer: 64 << 20 });
  if (r.status !== 0) throw new Error(`harness exited ${r.status}: ${r.stderr}`);
  return { wasm, c: r.stdout };
}

describe(`native C build (wasm2c)${nativeNote}`, () => {
  it.skipIf(!canNative)(`prints byte-identical serial output to the wasm build: full session${nativeNote}`, () => {
    const { wasm, c } = runBoth("session", sessionScript());
    const text = wasm.toString("latin1");
    // The session reached every part it was written for.
    for (const tag of ["ID henrytick", "PX 0", "CE ", "ER 7 MS", "ER 10 MS", "SR 20000", "ER 11 MS", "ER 9 MS", "CT "]) {
      expect(text).toContain(tag);
    }
    expect(c.equals(wasm)).toBe(true);
  });

  it.skipIf(!canNative)(`prints byte-identical serial output to the wasm build: raw 16-bit capture${nativeNote}`, () => {
    const { wasm, c } = runBoth("raw16", rawScript());
    expect(wasm.toString("latin1").match(/^CE /gm)).toHaveLength(5);
    expect(wasm.toString("latin1")).toMatch(/^SR 20000 2\*/m);
    expect(wasm.toString("latin1")).toMatch(/^ER 10 MS \d+\*/m);
    expect(c.equals(wasm)).toBe(true);
  });

  it.skipIf(!canNative)(`runtime: bounded memory, refused growth, traps through the port's hook${nativeNote}`, () => {
    const r = spawnSync(buildRuntimeCheck(), [], { encoding: "utf8" });
    expect(r.stdout).not.toContain("FAIL");
    expect(r.stdout.trim().split("\n")).toHaveLength(11);
    expect(r.status).toBe(0);
  });

  it.skipIf(!canNative)(`backs linear memory with the firmware's high-water mark plus ${MEMORY_MARGIN_BYTES} B, not the whole page${nativeNote}`, () => {
    // The byte-identical runs above use this backing; here: it is what the firmware reports it
    // allocated (rounded up to 1 KiB after the margin), well under the 64 KiB page.
    const used = firmwareMemoryUsed();
    const backing = linearMemoryBacking();
    expect(backing).toBe(memoryBacking(used));
    expect(backing - used).toBeGreaterThanOrEqual(MEMORY_MARGIN_BYTES);
    expect(backing - used).toBeLessThan(MEMORY_MARGIN_BYTES + 1024);
    expect(backing).toBeLessThan(65536);
  });

  it.skipIf(!canNative)(`a backing smaller than the firmware's memory traps at start, before any output${nativeNote}`, () => {
    const file = writeScript("short-memory", `rx ${hex("ID")}\n`);
    const used = firmwareMemoryUsed();
    // 1 KiB short: the module's own start-up (zeroing the edge buffer) runs off the end. Eight
    // bytes short: start-up fits (the last block's payload is never written), the check at start
    // catches it.
    for (const backing of [Math.floor(used / 1024) * 1024 - 1024, Math.floor((used - 1) / 8) * 8]) {
      const r = spawnSync(buildHostHarness(backing), [file], { encoding: "utf8" });
      expect(r.status, `backing ${backing}`).toBe(3);
      expect(r.stderr).toContain("out-of-bounds memory access");
      expect(r.stdout).toBe("");
    }
    const ok = spawnSync(buildHostHarness(memoryBacking(used)), [file], { encoding: "utf8" });
    expect(ok.status).toBe(0);
    expect(ok.stdout).toMatch(/^ID henrytick /);
  });

  it.skipIf(!canNative)(`compiles and links the template port with the host compiler${nativeNote}`, () => {
    expect(buildTemplateHost()).toMatch(/template-host$/);
  });
});

describe(`Cortex-M builds of the template port${armNote}`, () => {
  it.skipIf(!(canNative && hasArmGcc)).each(["armv6m", "armv7em"] as const)(`links for %s with the linear memory's backing in .bss${armNote}`, (target) => {
    const s = buildArm(target);
    const backing = linearMemoryBacking();
    expect(s.bss_bytes).toBeGreaterThanOrEqual(backing); // the backed part of the page lives in RAM
    expect(s.bss_bytes).toBeLessThan(backing + 4096); // and little else: not the whole 64 KiB page
    expect(s.text_bytes).toBeGreaterThan(0);
  });
});
