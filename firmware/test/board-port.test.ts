// The STM32F411CE board port (firmware/ports/f411/): its clock arithmetic, its image (own memory
// map, vector table, RAM within the goal), and its QEMU variant on the emulated STM32F405
// (netduinoplus2), which runs the shared capture merge on the emulated core and the firmware
// behind the port's own USART driver. Needs the Debian packages wabt, gcc-arm-none-eabi,
// libnewlib-arm-none-eabi (image) and qemu-system-arm (emulation); skipped, and says so, without.

import { execFileSync, spawn, spawnSync } from "node:child_process";
import { readFileSync, rmSync, writeFileSync } from "node:fs";
import { connect } from "node:net";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { encodeCommand } from "../../host/src/device/frames.ts";
import { SimTester } from "../../host/src/sim/sim-tester.ts";
import { NATIVE_DIR, buildBoard, buildBoardHostSim, buildCaptureMergeCheck, hasArmGcc, hasHostGcc, hasQemuArm, hasWasm2c, runBoardMergeCheck } from "../ports/native-build.ts";
import { fnv1a } from "./capture-checksum.ts";

const PORT_DIR = join(import.meta.dirname, "..", "ports", "f411");
const canImage = hasWasm2c && hasArmGcc;
const imageNote = canImage ? "" : " (skipped: Debian packages wabt, gcc-arm-none-eabi, libnewlib-arm-none-eabi not installed)";
const canQemu = canImage && hasQemuArm && hasHostGcc;
const qemuNote = canQemu ? "" : " (skipped: Debian package qemu-system-arm, gcc-arm-none-eabi or wabt not installed)";

/** The #defines of a header, numeric ones evaluated in order (later ones use earlier ones). */
function defines(file: string): Record<string, number> {
  const out: Record<string, number> = {};
  for (const m of readFileSync(file, "utf8").matchAll(/^#define (F411_\w+) (.+)$/gm)) {
    const expr = m[2].replace(/\/\*.*\*\//, "").replace(/(\d+)u\b/g, "$1").replace(/F411_\w+/g, (k) => String(out[k]));
    out[m[1]] = Function(`"use strict"; return (${expr});`)() as number;
  }
  return out;
}

describe("STM32F411CE board port: clock tree", () => {
  it("gives TIM2 exactly the profile's 64 MHz from the 25 MHz crystal, inside the PLL's limits", () => {
    const c = defines(join(PORT_DIR, "clock.h"));
    const board = readFileSync(join(import.meta.dirname, "..", "assembly", "board.ts"), "utf8");
    const tickHz = Number(/TICK_HZ: i32 = (\d+)/.exec(board)![1]);
    expect(c.F411_HSE_HZ).toBe(25e6);
    // Limits: RM0383 §6.3.2 (RCC_PLLCFGR: VCO input 1..2 MHz, output 100..432 MHz, P 2/4/6/8,
    // Q 2..15) and the F411's 100 MHz HCLK and 50 MHz APB1 maxima — value from memory.
    const vcoIn = c.F411_HSE_HZ / c.F411_PLL_M;
    const vco = vcoIn * c.F411_PLL_N;
    expect(Number.isInteger(vcoIn)).toBe(true);
    expect(vcoIn).toBeGreaterThanOrEqual(1e6);
    expect(vcoIn).toBeLessThanOrEqual(2e6);
    expect(vco).toBeGreaterThanOrEqual(100e6);
    expect(vco).toBeLessThanOrEqual(432e6);
    expect([2, 4, 6, 8]).toContain(c.F411_PLL_P);
    const sysclk = vco / c.F411_PLL_P;
    expect(sysclk).toBe(64e6);
    expect(vco / c.F411_PLL_Q).toBe(48e6); // USB OTG FS clock, for the USB CDC step
    const pclk1 = sysclk / c.F411_AHB_DIV / c.F411_APB1_DIV;
    expect(pclk1).toBeLessThanOrEqual(50e6);
    // RM0383 §6.2: timers on an APB bus whose prescaler is not 1 run at twice the bus clock.
    const tim2 = c.F411_APB1_DIV === 1 ? pclk1 : 2 * pclk1;
    expect(tim2).toBe(tickHz);
    expect(c.F411_TIM2_HZ).toBe(tim2); // the header's own formula agrees
    // USART1 on APB2 at 115 200 baud: within 0.5 % (a UART tolerates about 2 %: common bench practice, no source).
    const baud = c.F411_PCLK2_HZ / c.F411_USART1_BRR;
    expect(Math.abs(baud / 115200 - 1)).toBeLessThan(0.005);
  });
});

describe(`STM32F411CE board port: image${imageNote}`, () => {
  it.skipIf(!canImage)(`links for the Cortex-M4 with its own memory map, data + bss within 48 KiB${imageNote}`, () => {
    const img = buildBoard();
    expect(img.text_bytes).toBeGreaterThan(10000);
    expect(img.text_bytes).toBeLessThan(512 * 1024);
    expect(img.data_bytes + img.bss_bytes).toBeLessThanOrEqual(48 * 1024);
    const ld = readFileSync(join(PORT_DIR, "f411.ld"), "utf8");
    expect(ld).toMatch(/FLASH \(rx\) : ORIGIN = 0x08000000, LENGTH = 512K/);
    expect(ld).toMatch(/RAM \(rwx\) {2}: ORIGIN = 0x20000000, LENGTH = 128K/);
    // The stack pointer starts at the top of the 128 KiB SRAM; the handlers sit in the vector
    // slots of their interrupts (RM0383 vector table: DMA1 stream 5 = 16, stream 6 = 17, TIM2 = 28, USART1 = 37).
    const syms = new Map<string, number>();
    for (const line of execFileSync("arm-none-eabi-nm", [img.elf], { encoding: "utf8" }).split("\n")) {
      const [addr, , name] = line.trim().split(/\s+/);
      if (name) syms.set(name, parseInt(addr, 16));
    }
    const bin = join(NATIVE_DIR, "f411-vectors.bin");
    execFileSync("arm-none-eabi-objcopy", ["-O", "binary", "--only-section=.isr_vector", img.elf, bin]);
    const v = readFileSync(bin);
    const word = (i: number) => v.readUInt32LE(4 * i);
    expect(v.length).toBe(4 * (16 + 86));
    expect(word(0)).toBe(0x20000000 + 128 * 1024);
    expect(word(1)).toBe(syms.get("Reset_Handler")! | 1);
    for (const [irq, fn] of [[16, "DMA1_Stream5_IRQHandler"], [17, "DMA1_Stream6_IRQHandler"], [28, "TIM2_IRQHandler"], [37, "USART1_IRQHandler"]] as const) {
      expect(word(16 + irq), fn).toBe(syms.get(fn)! | 1);
    }
  });
});

const canHostSim = hasWasm2c && hasHostGcc;
const hostSimNote = canHostSim ? "" : " (skipped: Debian package wabt or gcc not installed)";

let hostSim: string | undefined;
let hostSimRuns = 0;
/** Runs the board port's host build (firmware/ports/host/f411-hostsim.c) on a script. */
function runHostSim(script: string[]): string[] {
  hostSim ??= buildBoardHostSim();
  const file = join(NATIVE_DIR, `f411-hostsim-${process.pid}-${hostSimRuns++}.script`);
  writeFileSync(file, script.join("\n") + "\n");
  const r = spawnSync(hostSim, [file], { encoding: "utf8", maxBuffer: 64 << 20 });
  if (r.status !== 0) throw new Error(`f411-hostsim exited ${r.status}: ${r.stderr}`);
  return r.stdout.trim().split("\n");
}

const U32 = 2 ** 32;
const OC3M_INACTIVE_ON_MATCH = 2;
const OC3M_FORCE_INACTIVE = 4;

/**
 * A capture as the board's hardware delivers it: pulse at counter `start`, then each edge's raw
 * value through its DMA stream at its time, the counter advancing with the edges and the main
 * loop's capture_count every `pollEvery` edges; stop 2 ms after the last edge.
 */
function boardCapture(entries: number[], start: number, charge: number, opts: { pollEvery?: number; hold?: [number, number] } = {}): string[] {
  const zero = (start + charge) % U32;
  const s = [`cnt ${start}`, `pulse ${charge} 8192`];
  entries.forEach((e, i) => {
    const raw = (zero + Math.floor(e / 2)) % U32;
    if (opts.hold && i === opts.hold[0]) s.push("hold");
    s.push(`cnt ${(raw + 3) % U32}`, `cap ${e & 1} ${raw}`);
    if (opts.hold && i === opts.hold[1]) s.push("release");
    if (opts.pollEvery && i % opts.pollEvery === 0) s.push(`cnt ${(raw + 200) % U32}`, "count");
  });
  const last = Math.floor(entries[entries.length - 1] / 2);
  s.push(`cnt ${(zero + last + 128000) % U32}`, "stop", "entries");
  return s;
}

const entriesOf = (out: string[]) => out.find((l) => l.startsWith("entries"))!.split(" ").slice(1).map(Number);

describe(`STM32F411CE board port: its capture path on the host, registers modelled${hostSimNote}`, () => {
  const ring = simEntries(5);

  it.skipIf(!canHostSim)(`arms the gate and both DMA streams, and delivers a simulated ring through its interrupts and capture_count${hostSimNote}`, () => {
    const out = runHostSim(boardCapture(ring, 1000, 12800, { pollEvery: 5 }));
    // Gate: compare value = zero, inactive on match; DMA1 streams 5 and 6 on channel 3 (RM0383
    // Table 27: TIM2_CH1, TIM2_CH2), from TIM2_CCR1 / TIM2_CCR2 (0x40000034 / 0x40000038), 512 each.
    expect(out[0]).toBe(`pulse ${OC3M_INACTIVE_ON_MATCH} 13800 1 1 1 3 3 ${0x40000034} ${0x40000038} 512 512`);
    const counts = out.filter((l) => l.startsWith("count ")).map((l) => Number(l.slice(6)));
    expect(counts.length).toBeGreaterThan(50);
    expect(counts.some((n, i) => n > 0 && n < ring.length && n >= (counts[i - 1] ?? 0))).toBe(true);
    for (let i = 1; i < counts.length; i++) expect(counts[i]).toBeGreaterThanOrEqual(counts[i - 1]);
    // stop: gate forced inactive, drive rail off first, every edge delivered.
    expect(out.find((l) => l.startsWith("stop"))).toBe(`stop ${OC3M_FORCE_INACTIVE} ${1 << 16} ${ring.length}`);
    expect(entriesOf(out)).toEqual(ring);
  });

  it.skipIf(!canHostSim)(`counts across the 32-bit counter's wrap, and listens with the gate untouched${hostSimNote}`, () => {
    const wrap = runHostSim(boardCapture(ring, U32 - 5000, 12800, { pollEvery: 3 }));
    expect(entriesOf(wrap)).toEqual(ring);
    const listen = runHostSim(["cnt 7000", "pulse 0 512", "cap 1 7100", "cap 0 7300", "cnt 9000", "stop", "entries"]);
    expect(listen[0]).toMatch(new RegExp(`^pulse ${OC3M_FORCE_INACTIVE} `));
    expect(entriesOf(listen)).toEqual([201, 600]);
  });

  it.skipIf(!canHostSim)(`survives interrupts held off past a half ring while capture_count merges, and reports a ring lapped without it${hostSimNote}`, () => {
    // Synthetic: 1600 alternating edges 40 ticks apart, 800 per DMA ring of 512.
    const long = [...Array(1600).keys()].map((i) => (1000 + 40 * i) * 2 + (i % 2 === 0 ? 1 : 0));
    // Interrupts held for 1100 edges (the streams' half and full events both pending), the main
    // loop's capture_count merging meanwhile: every edge arrives, in order.
    const held = runHostSim(boardCapture(long, 50, 12800, { hold: [300, 1400], pollEvery: 5 }));
    expect(entriesOf(held)).toEqual(long);
    // The same with no capture_count: each ring is overwritten before it is read.
    const lapped = entriesOf(runHostSim(boardCapture(long, 50, 12800, { hold: [100, 1200] })));
    expect(lapped[lapped.length - 1]).toBe(0x80000000 + 0x01);
    expect(lapped.slice(0, -1)).toEqual(long.slice(0, lapped.length - 1));
    // And interrupts alone, never held: exact.
    expect(entriesOf(runHostSim(boardCapture(long, 50, 12800)))).toEqual(long);
  });

  it.skipIf(!canHostSim)(`reports the timer's over-capture flag as a fault entry${hostSimNote}`, () => {
    const out = runHostSim(["cnt 0", "pulse 640 100", "cnt 700", "cap 1 700", "cnt 800", "count", "ovr", "cap 0 900", "cnt 1000", "count", "stop", "entries"]);
    expect(entriesOf(out)).toEqual([121, 0x80000000 + 0x20]);
  });

  it.skipIf(!canHostSim)(`selects one drive resistor and one tank, break before make, and turns the drive rail on${hostSimNote}`, () => {
    const out = runHostSim(["select 2 3"]);
    const writes = out[0].split(" ").slice(1).map(Number);
    // Resets of PB12..PB15 and PB4..PB7 first, then set PB14 (R3), PB7 (K4), PB0 (drive enable).
    const resets = writes.slice(0, 8).reduce((a, w) => a | w, 0) >>> 0;
    expect(resets).toBe(((0xf << 12) | (0xf << 4)) * 65536);
    expect(writes.slice(8)).toEqual([1 << 14, 1 << 7, 1 << 0]);
  });
});

/** A real ring from the simulated tester, as the firmware's entries. */
function simEntries(seed: number): number[] {
  const sim = new SimTester({ part: { inductance_h: 330e-6, series_ohm: 0.4, self_capacitance_f: 0 }, seed });
  sim.input(encodeCommand("MS", [1, 2, 200, 8192, 1000, 2000]));
  const e = sim.lastEdges!;
  return e.ticks.map((t, i) => t * 2 + e.levels[i]);
}

/**
 * Boots the QEMU variant, one instruction per emulated nanosecond (-icount shift=0): USART1 (the
 * host link) on a unix socket, USART2 on stdout. Once the merge line is out, sends each command
 * and waits for its OK line; returns both outputs.
 */
function bootQemu(elf: string, commands: string[]): Promise<{ usart1: string; usart2: string }> {
  const sock = join(tmpdir(), `ht-f411-${process.pid}.sock`);
  rmSync(sock, { force: true });
  const q = spawn("qemu-system-arm", ["-M", "netduinoplus2", "-kernel", elf, "-display", "none", "-monitor", "none",
    "-icount", "shift=0", "-serial", `unix:${sock},server=on,wait=off`, "-serial", "stdio"], { stdio: ["ignore", "pipe", "pipe"] });
  return new Promise((resolve, reject) => {
    let usart1 = "";
    let usart2 = "";
    let err = "";
    let started = false;
    q.stderr.on("data", (d) => (err += d));
    q.on("exit", (code) => (started ? undefined : reject(new Error(`qemu exited ${code}: ${err}`))));
    q.stdout.on("data", (d) => {
      usart2 += d.toString("latin1");
      if (started || !usart2.includes("\n")) return;
      started = true;
      if (commands.length === 0) {
        q.kill();
        rmSync(sock, { force: true });
        return resolve({ usart1, usart2 });
      }
      const link = connect(sock);
      let next = 0;
      const send = () => link.write(Buffer.from(encodeCommand(commands[next], [])));
      link.on("connect", send);
      link.on("data", (b) => {
        usart1 += b.toString("latin1");
        if (!new RegExp(`^OK ${commands[next]}\\*`, "m").test(usart1)) return;
        next++;
        if (next < commands.length) return send();
        link.destroy();
        q.kill();
        rmSync(sock, { force: true });
        resolve({ usart1, usart2 });
      });
    });
  });
}

describe(`STM32F411CE board port on QEMU's STM32F405 (netduinoplus2)${qemuNote}`, () => {
  it.skipIf(!canQemu)(`runs the shared capture merge on the emulated core with the host build's checksum, then serves ID, ST and CN${qemuNote}`, async () => {
    const edges = simEntries(11);
    const table = { edges, zero: 4294900000, ring: 64, capacity: 8192, pollEvery: 7 };
    const img = buildBoard(table);
    // The same replay on the host build of the merge, and the checksum the entries must have.
    const script = join(NATIVE_DIR, "board-port-replay.script");
    writeFileSync(script, `replay ${table.zero} ${table.ring} ${table.capacity} ${table.pollEvery} ${edges.length} ${edges.join(" ")}\n`);
    const host = execFileSync(buildCaptureMergeCheck(), [script], { encoding: "utf8" }).trim();
    expect(host).toBe(`replay ${edges.length} 0 ${fnv1a(edges)}`);

    const { usart1, usart2 } = await bootQemu(img.elf, ["ID", "ST", "CN"]);
    expect(usart2.split("\n")[0]).toMatch(new RegExp(`^merge ${edges.length} 0 ${fnv1a(edges)} \\d+$`));
    // The variant's fixed stand-in for the unique ID, hashed as on the board (FNV-1a over 12 bytes).
    const uid = Buffer.alloc(12);
    [0x00454d55, 0x51454d55, 0x31313446].forEach((w, i) => uid.writeUInt32LE(w, 4 * i));
    let id = 2166136261;
    for (const b of uid) id = Math.imul(id ^ b, 16777619) >>> 0;
    expect(usart1).toMatch(new RegExp(`^ID henrytick \\S+ \\d+ HT-${id.toString(16).toUpperCase().padStart(8, "0")}\\*`, "m"));
    // The self-test listens with the switch open through pulse(0), capture_count and stop: QEMU's
    // timer counts but nothing captures, so the window passes with no edges.
    expect(usart1).toMatch(/^SR 20000 0\*/m);
    expect(usart1).toMatch(/^CT 0 0 0 0\*/m);
  });

  it.skipIf(!canQemu)(`merges the host's fastest ring (1.6 MHz, 8192 edges) at under 20 instructions per edge${qemuNote}`, async () => {
    // Synthetic square wave, 40 ticks per period, through 512-entry rings as on the board.
    const edges: number[] = [];
    for (let i = 0; i < 8192; i++) edges.push((100 + 20 * i) * 2 + (i % 2 === 0 ? 1 : 0));
    const img = buildBoard({ edges, zero: 4294000000, ring: 512, capacity: 8192, pollEvery: 0 });
    const r = await runBoardMergeCheck(img.elf);
    expect([r.count, r.fault, r.checksum]).toEqual([8192, 0, fnv1a(edges)]);
    // SysTick runs on the emulated core clock (168 MHz in QEMU's STM32F405 model); under
    // -icount shift=0 every instruction takes 1 ns.
    const perEdge = r.instructions / 8192;
    expect(perEdge).toBeGreaterThan(5); // it was measured at all
    expect(perEdge).toBeLessThan(20);
    console.log(`capture merge on the emulated Cortex-M4: ${perEdge.toFixed(1)} instructions per edge`);
  });
});
