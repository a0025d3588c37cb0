// Firmware budgets: release wasm size, wire bytes per edge of typical captures, and the native
// C build's section sizes for Cortex-M0+ (armv6m) and Cortex-M4 (armv7em); the STM32F411CE
// board image's flash and RAM and its capture merge's cost on the emulated core; the C build on
// the emulated STM32F405 (QEMU): its readings against --sim on both cores, its pace and its stack.

import { statSync } from "node:fs";
import { firmwareWasmPath } from "../../../host/src/sim/firmware-image.ts";
import { SimTester } from "../../../host/src/sim/sim-tester.ts";
import { loadScenario, listScenarios } from "../../../host/src/sim/scenario.ts";
import { encodeCommand } from "../../../host/src/device/frames.ts";
import { buildArm, buildBoard, buildQemuF405, hasArmGcc, hasQemuArm, hasWasm2c, linearMemoryBacking, runBoardMergeCheck } from "../../../firmware/ports/native-build.ts";
import { spawn } from "node:child_process";
import { fileURLToPath } from "node:url";
import { measurePart, openTester } from "../../../host/src/index.ts";
import { boardWithFixture, referenceBoard } from "../../../host/src/sim/board-model.ts";
import { QemuDevice, hasQemu, type EmulatedCore } from "../../../host/src/sim/qemu-device.ts";
import { DEFAULT_SCENARIO } from "../../../host/src/sim/scenario.ts";
import { ScriptedPort } from "../../../firmware/test/scripted-port.ts";
import type { BenchFigures } from "./types.ts";
import type { BenchSection } from "./types.ts";

/** Template port + runtime + wasm2c output, linked for each Cortex-M target (Berkeley sizes). */
function armFigures(): { figures: BenchFigures; notes: Record<string, string> } {
  const figures: BenchFigures = {};
  const notes: Record<string, string> = {};
  for (const target of ["armv6m", "armv7em"] as const) {
    const keys = ["text", "data", "bss"].map((k) => `firmware.${target}_${k}_bytes`);
    if (!hasWasm2c || !hasArmGcc) {
      for (const k of keys) figures[k] = null;
      notes[keys[0]] = "not measured: install Debian packages wabt, gcc-arm-none-eabi, libnewlib-arm-none-eabi";
      continue;
    }
    const s = buildArm(target);
    figures[keys[0]] = s.text_bytes;
    figures[keys[1]] = s.data_bytes;
    figures[keys[2]] = s.bss_bytes;
    const cpu = target === "armv6m" ? "Cortex-M0+" : "Cortex-M4";
    notes[keys[0]] = `${cpu}, -Os, template port linked with newlib-nano; .text includes .rodata and start-up`;
    notes[keys[2]] = `includes the linear memory's backing (${linearMemoryBacking()} B of the 64 KiB page)`;
  }
  // The STM32F411CE board port (firmware/ports/f411/) as it would be flashed.
  if (!hasWasm2c || !hasArmGcc) {
    figures["firmware.board_text_bytes"] = null;
    figures["firmware.board_ram_bytes"] = null;
    notes["firmware.board_text_bytes"] = "not measured: install Debian packages wabt, gcc-arm-none-eabi, libnewlib-arm-none-eabi";
  } else {
    const b = buildBoard();
    figures["firmware.board_text_bytes"] = b.text_bytes;
    figures["firmware.board_ram_bytes"] = b.data_bytes + b.bss_bytes;
    notes["firmware.board_text_bytes"] = "STM32F411CE board port, Cortex-M4, -Os, newlib-nano; .text includes .rodata and the vector table (of 512 KiB flash)";
    notes["firmware.board_ram_bytes"] = "data + bss of the board image (linear memory backing, 2 x 2 KiB DMA rings, runtime; the C stack comes on top), goal <= 49152";
  }
  return { figures, notes };
}

/** The board port's capture merge on the emulated Cortex-M4, fed the host's fastest ring. */
async function boardMergeCost(): Promise<{ figures: BenchFigures; notes: Record<string, string> }> {
  const key = "firmware.board_merge_instructions_per_edge";
  if (!hasWasm2c || !hasArmGcc || !hasQemuArm) {
    return { figures: { [key]: null }, notes: { [key]: "not measured: install Debian packages wabt, gcc-arm-none-eabi, libnewlib-arm-none-eabi, qemu-system-arm" } };
  }
  // A 1.6 MHz square wave (40 ticks per period), 8192 edges, through the board's 512-entry rings.
  const edges: number[] = [];
  for (let i = 0; i < 8192; i++) edges.push((100 + 20 * i) * 2 + (i % 2 === 0 ? 1 : 0));
  const r = await runBoardMergeCheck(buildBoard({ edges, zero: 4294000000, ring: 512, capacity: 8192, pollEvery: 0 }).elf);
  const ok = r.count === edges.length && r.fault === 0;
  return {
    figures: { [key]: ok ? Math.round((r.instructions / edges.length) * 10) / 10 : null },
    notes: { [key]: ok ? "QEMU netduinoplus2, -icount shift=0 (instructions, not cycles), 1.6 MHz ring of 8192 edges" : `merge failed: ${r.count} entries, fault ${r.fault}` },
  };
}

const CLI = fileURLToPath(new URL("../../../host/bin/henrytick.js", import.meta.url));

/** `henrytick measure … --json` without blocking the event loop (the edge server runs in it). */
function measureJson(args: string[]): Promise<Record<string, unknown> | null> {
  return new Promise((resolve) => {
    const child = spawn(process.execPath, [CLI, "measure", ...args, "--json"], { stdio: ["ignore", "pipe", "ignore"] });
    let out = "";
    child.stdout.setEncoding("utf8").on("data", (t: string) => (out += t));
    child.on("exit", (code) => {
      if (code !== 0) return resolve(null);
      const { label: _l, device, ...rest } = JSON.parse(out);
      const { transport: _t, ...dev } = device;
      resolve({ ...rest, device: dev });
    });
  });
}

/**
 * The firmware's C build on the emulated STM32F405 (QEMU), both cores: whether its reading of
 * the default scenario equals `--sim`'s bit for bit, readings per second through the library,
 * and the C stack's high-water mark afterwards.
 */
async function emulatedFigures(): Promise<{ figures: BenchFigures; notes: Record<string, string> }> {
  const keys = ["firmware.emulated_m4_match", "firmware.emulated_m0_match", "firmware.stack_high_water_bytes", "firmware.emulated_readings_per_s"];
  if (!hasWasm2c || !hasArmGcc || !hasQemu()) {
    return { figures: Object.fromEntries(keys.map((k) => [k, null])), notes: { [keys[0]]: "not measured: install Debian packages qemu-system-arm, wabt, gcc-arm-none-eabi, libnewlib-arm-none-eabi" } };
  }
  const scenario = loadScenario(DEFAULT_SCENARIO);
  const sim = await measureJson(["--sim"]);
  const figures: BenchFigures = {};
  const stack: string[] = [];
  let highWater = 0;
  const READINGS = 5;
  for (const core of ["m4", "m0"] as EmulatedCore[]) {
    const device = await QemuDevice.start({ core, elf: buildQemuF405(core), board: boardWithFixture(referenceBoard(), scenario.fixture), part: scenario.part, seed: scenario.seed });
    try {
      const reading = await measureJson(["--port", device.path]);
      figures[`firmware.emulated_${core}_match`] = sim !== null && JSON.stringify(reading) === JSON.stringify(sim) ? 1 : 0;
      if (core === "m4") {
        const t = await openTester({ port: device.path });
        try {
          const t0 = performance.now();
          for (let i = 0; i < READINGS; i++) await measurePart(t.client);
          figures["firmware.emulated_readings_per_s"] = READINGS / ((performance.now() - t0) / 1000);
        } finally {
          await t.close();
        }
      }
      const used = await device.stackHighWater();
      stack.push(`${used} B on the Cortex-${core.toUpperCase()}`);
      highWater = Math.max(highWater, used);
    } finally {
      await device.close();
    }
  }
  figures["firmware.stack_high_water_bytes"] = highWater;
  return {
    figures,
    notes: {
      "firmware.emulated_m4_match": `1 when measure --port on the emulated Cortex-M4 equals measure --sim (${DEFAULT_SCENARIO}, same seed) in every field but the link's name`,
      "firmware.emulated_m0_match": "the same on the emulated Cortex-M0 (ARMv6-M build)",
      "firmware.stack_high_water_bytes": `C stack after the readings, painted at reset and scanned through QEMU's monitor: ${stack.join(", ")}; the emulated-device test holds it under 1536 B`,
      "firmware.emulated_readings_per_s": `auto-ranged readings of ${DEFAULT_SCENARIO} through the library on the emulated Cortex-M4 (${READINGS} in a row, QEMU -icount shift=4,sleep=off)`,
    },
  };
}

/** Bytes on the wire per captured edge, header and trailer included, for one capture. */
function wireBytesPerEdge(scenario: string, drive: number, tank: number, charge_us: number): { bytes: number; edges: number } {
  const s = loadScenario(scenario);
  const sim = new SimTester({ part: s.part, seed: s.seed });
  let bytes = 0;
  let streaming = false;
  let edges = 0;
  let text = "";
  sim.onOutput((b) => {
    text += new TextDecoder().decode(b);
  });
  sim.input(encodeCommand("MS", [drive, tank, charge_us, 8192, 2000, 20000]));
  for (const line of text.split("\n")) {
    if (line.startsWith("CH")) streaming = true;
    if (streaming) bytes += line.length + 1;
    if (line.startsWith("CH")) edges = Number(line.split(" ")[7].split("*")[0]);
    if (line.startsWith("CE")) streaming = false;
  }
  return { bytes, edges };
}

export const firmwareSection: BenchSection = {
  name: "firmware",
  async run() {
    const wasm = statSync(firmwareWasmPath("release")).size;
    // Typical captures: each demo part on the setting the range plan picks for it.
    const cases: [string, number, number, number][] = [
      ["drawer-choke-330u", 1, 2, 17],
      ["loop-antenna-1u2", 1, 2, 2],
      ["filter-coil-4m7", 1, 2, 233],
      ["solenoid-valve-82m", 3, 1, 45],
    ];
    let bytes = 0;
    let edges = 0;
    for (const c of cases) {
      if (!listScenarios().includes(c[0])) continue;
      const r = wireBytesPerEdge(...c);
      bytes += r.bytes;
      edges += r.edges;
    }
    const arm = armFigures();
    const merge = await boardMergeCost();
    const emulated = await emulatedFigures();
    // Top of the bump allocator once the module has started: everything the firmware will ever
    // use of its one 64 KiB page (static data, buffers, the edge buffer).
    const probe = new ScriptedPort("probe");
    const used = (probe.fw as unknown as { fw_heap_mark(): number }).fw_heap_mark();
    return {
      figures: {
        "firmware.wasm_bytes": wasm,
        "firmware.wire_bytes_per_edge": bytes / edges,
        "firmware.memory_used_bytes": used,
        "firmware.linear_memory_backing_bytes": hasWasm2c ? linearMemoryBacking() : null,
        ...arm.figures,
        ...merge.figures,
        ...emulated.figures,
      },
      notes: {
        "firmware.wasm_bytes": "release build, goal <= 12288",
        "firmware.wire_bytes_per_edge": `CH..CE lines over ${edges} edges of 4 demo captures, goal <= 3.5`,
        "firmware.memory_used_bytes": "of the one 65536-byte page, including the 32 KiB edge buffer",
        "firmware.linear_memory_backing_bytes": "static storage a C port gives the page: fw_memory_used() + 256 B, rounded up to 1 KiB",
        ...arm.notes,
        ...merge.notes,
        ...emulated.notes,
      },
    };
  },
};
