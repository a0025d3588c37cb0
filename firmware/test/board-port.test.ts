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
import { NATIVE_DIR, buildBoard, buildCaptureMergeCheck, hasArmGcc, hasHostGcc, hasWasm2c } from "../ports/native-build.ts";
import { fnv1a } from "./capture-checksum.ts";

const PORT_DIR = join(import.meta.dirname, "..", "ports", "f411");
const canImage = hasWasm2c && hasArmGcc;
const imageNote = canImage ? "" : " (skipped: Debian packages wabt, gcc-arm-none-eabi, libnewlib-arm-none-eabi not installed)";
const hasQemu = spawnSync("qemu-system-arm", ["--version"], { stdio: "ignore" }).status === 0;
const canQemu = canImage && hasQemu && hasHostGcc;
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
    const { usart2 } = await bootQemu(img.elf, []);
    const m = /^merge (\d+) (\d+) (\d+) (\d+)$/m.exec(usart2)!;
    expect(m.slice(1, 4).map(Number)).toEqual([8192, 0, fnv1a(edges)]);
    // SysTick runs on the emulated core clock, 168 MHz in QEMU's STM32F405 model; under
    // -icount shift=0 every instruction takes 1 ns: instructions = counts / 0.168.
    const perEdge = Number(m[4]) / 0.168 / 8192;
    expect(perEdge).toBeGreaterThan(5); // it was measured at all
    expect(perEdge).toBeLessThan(20);
    console.log(`capture merge on the emulated Cortex-M4: ${perEdge.toFixed(1)} instructions per edge`);
  });
});
