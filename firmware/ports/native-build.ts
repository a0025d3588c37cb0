// Builds the native C firmware: wasm2c on the release wasm, then the host harness, the template
// port, and Cortex-M0+ / Cortex-M4 images. Used by the tests and the benchmark; everything it
// produces goes to firmware/build/native/ (ignored by git). Needs the Debian packages `wabt`
// (wasm2c and its wasm-rt.h) and, for the ARM images, `gcc-arm-none-eabi`.

import { execFileSync, spawn, spawnSync } from "node:child_process";
import { copyFileSync, existsSync, mkdirSync, statSync, writeFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { firmwareMemoryUsed, memoryBacking } from "./memory-size.ts";

const PORTS = dirname(fileURLToPath(import.meta.url));
const FIRMWARE = join(PORTS, "..");
export const NATIVE_DIR = join(FIRMWARE, "build", "native");
const WASM = join(FIRMWARE, "build", "henrytick.wasm");

function found(cmd: string): boolean {
  return spawnSync(cmd, ["--version"], { stdio: "ignore" }).status === 0;
}

/** wasm2c's runtime header, which must come from the same wabt as wasm2c itself. */
function wasmRtHeader(): string | null {
  for (const dir of [process.env.WABT_INCLUDE, "/usr/include", "/usr/local/include"]) {
    if (dir && existsSync(join(dir, "wasm-rt.h"))) return join(dir, "wasm-rt.h");
  }
  return null;
}

export const hasWasm2c = found("wasm2c") && wasmRtHeader() !== null;
export const hasHostGcc = found("gcc");
/** The cross compiler and its C library (newlib: setjmp, memcpy and the headers wasm-rt.h uses). */
export const hasArmGcc = found("arm-none-eabi-gcc") &&
  spawnSync("arm-none-eabi-gcc", ["-print-file-name=nano.specs"], { encoding: "utf8" }).stdout.trim() !== "nano.specs";

/** Bytes behind the firmware's linear memory in the native builds (memory-size.ts). */
export function linearMemoryBacking(): number {
  return memoryBacking(firmwareMemoryUsed());
}

/**
 * Flags for compiling the generated C: our runtime's configuration, forced in first, with the
 * linear memory backed by what the current firmware uses (or by `backing_bytes` when given).
 */
function generatedFlags(backing_bytes = linearMemoryBacking()): string[] {
  return ["-std=c11", "-Werror=implicit-function-declaration", `-DHT_RT_MEMORY_BYTES=${backing_bytes}u`, "-include", join(PORTS, "runtime", "henrytick-rt.h")];
}
const INCLUDES = (dir: string) => ["-I", dir, "-I", join(PORTS, "runtime")];

/** Runs wasm2c on the release wasm (if newer than its output); returns the output directory. */
export function generateC(): string {
  const dir = join(NATIVE_DIR, "gen");
  mkdirSync(dir, { recursive: true });
  const c = join(dir, "henrytick.c");
  if (!existsSync(c) || statSync(c).mtimeMs < statSync(WASM).mtimeMs) {
    execFileSync("wasm2c", [WASM, "-o", c, "-n", "henrytick"]);
  }
  // Only this one header is copied: adding /usr/include to a cross build would pull in glibc.
  copyFileSync(wasmRtHeader()!, join(dir, "wasm-rt.h"));
  return dir;
}

function gcc(cc: string, args: string[]): void {
  const r = spawnSync(cc, args, { encoding: "utf8" });
  if (r.status !== 0) throw new Error(`${cc} failed:\n${r.stderr}`);
}

/**
 * Builds the host harness (firmware/ports/host/harness.c); returns the executable's path. With
 * `backing_bytes` the linear memory is backed by that many bytes instead of the measured size.
 */
export function buildHostHarness(backing_bytes?: number): string {
  const gen = generateC();
  const out = join(NATIVE_DIR, backing_bytes === undefined ? "harness" : `harness-${backing_bytes}`);
  gcc("gcc", [
    // The harness reads its script with POSIX getline/strtok_r; the forced include comes first,
    // so the feature macro must be on the command line.
    "-O2", "-Wall", "-D_POSIX_C_SOURCE=200809L", ...generatedFlags(backing_bytes), ...INCLUDES(gen), "-o", out,
    join(gen, "henrytick.c"), join(PORTS, "runtime", "henrytick-rt.c"), join(PORTS, "host", "harness.c"),
  ]);
  return out;
}

/** Bytes behind the linear memory in the runtime's own checks: less than a page, on purpose. */
export const RUNTIME_CHECK_BACKING_BYTES = 4096;

/** Builds the runtime's own checks (firmware/ports/host/runtime-check.c). */
export function buildRuntimeCheck(): string {
  const gen = generateC();
  const out = join(NATIVE_DIR, "runtime-check");
  gcc("gcc", [
    "-O2", "-Wall", "-Wextra", ...generatedFlags(RUNTIME_CHECK_BACKING_BYTES), ...INCLUDES(gen), "-o", out,
    join(PORTS, "runtime", "henrytick-rt.c"), join(PORTS, "host", "runtime-check.c"),
  ]);
  return out;
}

/** Compiles and links the template port with the host compiler (it must build as shipped). */
export function buildTemplateHost(): string {
  const gen = generateC();
  const out = join(NATIVE_DIR, "template-host");
  gcc("gcc", [
    "-O2", "-Wall", "-Wextra", ...generatedFlags(), ...INCLUDES(gen), "-o", out,
    join(gen, "henrytick.c"), join(PORTS, "runtime", "henrytick-rt.c"), join(PORTS, "template", "port-template.c"),
  ]);
  return out;
}

export interface ArmSizes {
  text_bytes: number;
  data_bytes: number;
  bss_bytes: number;
}

export const ARM_TARGETS = {
  armv6m: ["-mcpu=cortex-m0plus", "-mthumb"],
  armv7em: ["-mcpu=cortex-m4", "-mthumb", "-mfloat-abi=soft"],
} as const;

/** Links the template port for a Cortex-M target and returns its section sizes (Berkeley). */
export function buildArm(target: keyof typeof ARM_TARGETS): ArmSizes {
  const gen = generateC();
  const out = join(NATIVE_DIR, `template-${target}.elf`);
  gcc("arm-none-eabi-gcc", [
    ...ARM_TARGETS[target], "-Os", "-DNDEBUG", "-ffunction-sections", "-fdata-sections", ...generatedFlags(), ...INCLUDES(gen),
    "-nostartfiles", "--specs=nano.specs", "--specs=nosys.specs", "-Wl,--gc-sections", "-T", join(PORTS, "arm", "generic.ld"),
    "-o", out,
    join(gen, "henrytick.c"), join(PORTS, "runtime", "henrytick-rt.c"), join(PORTS, "template", "port-template.c"),
    join(PORTS, "arm", "startup.c"),
  ]);
  return armSizes(out);
}

/** Berkeley section sizes of a linked ARM image (.text includes .rodata and the vectors). */
function armSizes(elf: string): ArmSizes {
  const text = execFileSync("arm-none-eabi-size", [elf], { encoding: "utf8" }).trim().split("\n")[1].trim().split(/\s+/);
  return { text_bytes: Number(text[0]), data_bytes: Number(text[1]), bss_bytes: Number(text[2]) };
}

/** The capture merge shared by the board ports (firmware/ports/common/), as plain C. */
export const CAPTURE_MERGE_SOURCES = [join(PORTS, "common", "capture-merge.c"), join(PORTS, "common", "merge-replay.c")];

/** Builds the capture merge's host driver (firmware/ports/host/capture-merge-check.c); needs only gcc. */
export function buildCaptureMergeCheck(): string {
  mkdirSync(NATIVE_DIR, { recursive: true });
  const out = join(NATIVE_DIR, "capture-merge-check");
  gcc("gcc", [
    "-std=c11", "-O2", "-Wall", "-Wextra", "-Werror", "-I", join(PORTS, "common"), "-o", out,
    ...CAPTURE_MERGE_SOURCES, join(PORTS, "host", "capture-merge-check.c"),
  ]);
  return out;
}

/**
 * Builds the board port for the host with its registers modelled
 * (firmware/ports/host/f411-hostsim.c), so that its capture path runs under test.
 */
export function buildBoardHostSim(): string {
  const gen = generateC();
  const out = join(NATIVE_DIR, "f411-hostsim");
  gcc("gcc", [
    "-O2", "-D_POSIX_C_SOURCE=200809L", "-DHT_F411_HOSTSIM", ...generatedFlags(), ...INCLUDES(gen), "-I", join(PORTS, "common"), "-I", join(PORTS, "f411"),
    "-o", out, join(gen, "henrytick.c"), join(PORTS, "runtime", "henrytick-rt.c"), ...CAPTURE_MERGE_SOURCES,
    join(PORTS, "host", "f411-hostsim.c"),
  ]);
  return out;
}

export const hasQemuArm = found("qemu-system-arm");
/** The core clock of QEMU's STM32F405 model (netduinoplus2), which SysTick counts. */
export const QEMU_F405_CORE_HZ = 168e6;

export interface BoardMergeCheck {
  count: number;
  fault: number;
  checksum: number;
  /** Instructions the merge took on the emulated core (SysTick under -icount shift=0). */
  instructions: number;
}

/**
 * Boots the board port's QEMU variant (built with a table by buildBoard) until it has printed
 * its merge line on USART2, one instruction per emulated nanosecond; returns the line's figures.
 */
export function runBoardMergeCheck(elf: string): Promise<BoardMergeCheck> {
  const q = spawn("qemu-system-arm", ["-M", "netduinoplus2", "-kernel", elf, "-display", "none", "-monitor", "none",
    "-icount", "shift=0", "-serial", "null", "-serial", "stdio"], { stdio: ["ignore", "pipe", "pipe"] });
  return new Promise((resolve, reject) => {
    let out = "";
    let err = "";
    q.stderr.on("data", (d) => (err += d));
    q.on("exit", (code) => reject(new Error(`qemu exited ${code} before the merge line: ${err}`)));
    q.stdout.on("data", (d) => {
      out += d;
      const m = /^merge (\d+) (\d+) (\d+) (\d+)\n/m.exec(out);
      if (!m) return;
      q.kill();
      const [count, fault, checksum, systicks] = m.slice(1).map(Number);
      resolve({ count, fault, checksum, instructions: (systicks / QEMU_F405_CORE_HZ) * 1e9 });
    });
  });
}

/** A recorded ring compiled into the board port's QEMU variant: cm_replay's arguments (merge-replay.h). */
export interface MergeTable {
  /** Entries in the firmware's format, tick << 1 | level, in time order. */
  edges: number[];
  zero: number;
  ring: number;
  capacity: number;
  pollEvery: number;
}

export interface BoardImage extends ArmSizes {
  elf: string;
}

/**
 * Links the STM32F411CE board port (firmware/ports/f411/) for its Cortex-M4 with its own memory
 * map. With `qemuTable`: the port's variant for QEMU's netduinoplus2, which replays that ring
 * through the capture merge at start and prints the result on USART2.
 */
export function buildBoard(qemuTable?: MergeTable): BoardImage {
  const gen = generateC();
  const f411 = join(PORTS, "f411");
  const name = qemuTable ? "f411-qemu" : "f411";
  const extra: string[] = [];
  if (qemuTable) {
    const t = qemuTable;
    const dir = join(NATIVE_DIR, name);
    mkdirSync(dir, { recursive: true });
    const rows: string[] = [];
    for (let i = 0; i < t.edges.length; i += 8) rows.push("  " + t.edges.slice(i, i + 8).map((e) => `${e >>> 0}u`).join(", ") + ",");
    writeFileSync(join(dir, "merge-table.h"), [
      "/* Generated by firmware/ports/native-build.ts: a recorded ring for the QEMU variant's merge check. */",
      `#define HT_TABLE_EDGES ${t.edges.length}u`,
      `#define HT_TABLE_ZERO ${t.zero >>> 0}u`,
      `#define HT_TABLE_RING ${t.ring}u`,
      `#define HT_TABLE_CAPACITY ${t.capacity}u`,
      `#define HT_TABLE_POLL_EVERY ${t.pollEvery}u`,
      `static const uint32_t ht_table_edges[${Math.max(1, t.edges.length)}] = {`,
      ...(rows.length ? rows : ["  0u,"]),
      "};",
      "",
    ].join("\n"));
    extra.push("-DHT_F411_QEMU", "-I", dir);
  }
  const out = join(NATIVE_DIR, `${name}.elf`);
  gcc("arm-none-eabi-gcc", [
    ...ARM_TARGETS.armv7em, "-Os", "-DNDEBUG", "-Wall", "-ffunction-sections", "-fdata-sections", ...generatedFlags(), ...INCLUDES(gen),
    "-I", join(PORTS, "common"), "-I", f411, ...extra,
    "-nostartfiles", "--specs=nano.specs", "--specs=nosys.specs", "-Wl,--gc-sections", "-T", join(f411, "f411.ld"),
    "-o", out,
    join(gen, "henrytick.c"), join(PORTS, "runtime", "henrytick-rt.c"), ...CAPTURE_MERGE_SOURCES,
    join(f411, "port-f411.c"), join(f411, "startup-f411.c"),
  ]);
  return { elf: out, ...armSizes(out) };
}

/** Cores of the emulated STM32F405 port (firmware/ports/qemu-f405), with QEMU's -cpu name. */
export const QEMU_CORES = {
  m0: { flags: ["-mcpu=cortex-m0", "-mthumb"], qemu_cpu: "cortex-m0", id: 0 },
  m4: { flags: ["-mcpu=cortex-m4", "-mthumb", "-mfloat-abi=soft"], qemu_cpu: "cortex-m4", id: 1 },
} as const;
export type QemuCore = keyof typeof QEMU_CORES;

/** Links the emulated-board port for QEMU's netduinoplus2 machine; returns the ELF's path. */
export function buildQemuF405(core: QemuCore): string {
  const gen = generateC();
  const dir = join(PORTS, "qemu-f405");
  const out = join(NATIVE_DIR, `qemu-f405-${core}.elf`);
  gcc("arm-none-eabi-gcc", [
    ...QEMU_CORES[core].flags, "-Os", "-DNDEBUG", `-DQEMU_PORT_CORE=${QEMU_CORES[core].id}`, "-Wall", "-ffunction-sections", "-fdata-sections",
    ...generatedFlags(), ...INCLUDES(gen), "-I", join(PORTS, "common"),
    "-nostartfiles", "--specs=nano.specs", "--specs=nosys.specs", "-Wl,--gc-sections", "-T", join(dir, "qemu-f405.ld"),
    "-o", out,
    join(gen, "henrytick.c"), join(PORTS, "runtime", "henrytick-rt.c"), join(dir, "port-qemu-f405.c"), join(dir, "startup.c"),
  ]);
  return out;
}

// npx tsx firmware/ports/native-build.ts qemu-f405 [m0|m4 ...]: builds the emulated board's images.
// npx tsx firmware/ports/native-build.ts f411: builds the STM32F411CE board image (prints its path).
if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const [what, ...cores] = process.argv.slice(2);
  if (what === "f411") {
    process.stdout.write(buildBoard().elf + "\n");
    process.exit(0);
  }
  if (what !== "qemu-f405") {
    process.stderr.write("usage: native-build.ts qemu-f405 [m0|m4 ...] | f411\n");
    process.exit(2);
  }
  for (const core of cores.length ? cores : Object.keys(QEMU_CORES)) {
    if (!(core in QEMU_CORES)) {
      process.stderr.write(`unknown core "${core}" (m0 or m4)\n`);
      process.exit(2);
    }
    process.stdout.write(buildQemuF405(core as QemuCore) + "\n");
  }
}
