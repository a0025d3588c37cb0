// The capture merge shared by the board ports (firmware/ports/common/capture-merge.c): two DMA
// rings of raw 32-bit capture values (rising and falling edges of one comparator pin) become the
// firmware's entries, (ticks since the zero) << 1 | level, in time order. A C driver
// (firmware/ports/host/capture-merge-check.c) plays scripts of DMA writes, half/full-transfer
// interrupts and merge steps; the expected entries come straight from the simulated tester's
// edges, so any reordering, lost or invented edge shows. Needs gcc; skipped, and says so, without.

import { spawnSync } from "node:child_process";
import { mkdirSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { encodeCommand } from "../../host/src/device/frames.ts";
import { SimTester } from "../../host/src/sim/sim-tester.ts";
import { NATIVE_DIR, buildCaptureMergeCheck, hasHostGcc } from "../ports/native-build.ts";
import { fnv1a } from "./capture-checksum.ts";
import { ScriptedPort } from "./scripted-port.ts";

const note = hasHostGcc ? "" : " (skipped: Debian package gcc not installed)";

const LAPPED = 0x01;
const SAME_LEVEL = 0x02;
const LATE = 0x08;
const PORT = 0x20;
const FAULT_ENTRY = 0x80000000;
const U32 = 2 ** 32;

interface Edges {
  ticks: number[];
  levels: number[];
}

/** A real ring's edges from the simulated tester (330 µH part, the setting the range plan picks). */
function simEdges(seed: number): Edges {
  const sim = new SimTester({ part: { inductance_h: 330e-6, series_ohm: 0.4, self_capacitance_f: 0 }, seed });
  sim.input(encodeCommand("MS", [1, 2, 200, 8192, 1000, 2000]));
  const e = sim.lastEdges!;
  return { ticks: [...e.ticks], levels: [...e.levels] };
}

/** What the firmware must receive for these edges. */
const entries = (e: Edges) => e.ticks.map((t, i) => t * 2 + e.levels[i]);

interface Run {
  steps: number[];
  count: number;
  fault: number;
  beforeZero: number;
  entries: number[];
  lines: string[];
}

let seq = 0;
let driver: string | undefined;
function run(script: string[]): Run {
  driver ??= buildCaptureMergeCheck();
  mkdirSync(NATIVE_DIR, { recursive: true });
  const file = join(NATIVE_DIR, `capture-merge-${process.pid}-${seq++}.script`);
  writeFileSync(file, script.join("\n") + "\n");
  const r = spawnSync(driver, [file], { encoding: "utf8", maxBuffer: 64 << 20 });
  if (r.status !== 0) throw new Error(`capture-merge-check exited ${r.status}: ${r.stderr}`);
  const lines = r.stdout.trim().split("\n");
  const steps = lines.filter((l) => l.startsWith("n ")).map((l) => Number(l.slice(2)));
  const end = lines.find((l) => l.startsWith("end "))?.split(" ").map(Number) ?? [0, 0, 0];
  const list = lines.find((l) => l.startsWith("entries"))?.split(" ").slice(1).map(Number) ?? [];
  return { steps, count: end[1], fault: end[2], beforeZero: end[3], entries: list, lines };
}

/**
 * The board's schedule for a capture: each edge written by its level's DMA stream; when a stream
 * crosses half its ring, its interrupt runs and merges with the horizon just past that edge;
 * every `pollEvery` edges the main loop's capture_count merges too; a final merge at stop.
 */
function boardScript(e: Edges, zero: number, ringSize: number, capacity: number, pollEvery = 0): string[] {
  const s = [`open ${zero} ${ringSize} ${capacity}`];
  const total = [0, 0];
  e.ticks.forEach((t, i) => {
    const raw = (zero + t) % U32;
    const lv = e.levels[i];
    s.push(`edge ${raw} ${lv}`);
    total[lv]++;
    if (total[lv] % (ringSize / 2) === 0) s.push("irq", `step ${(raw + 1) % U32}`);
    else if (pollEvery && (i + 1) % pollEvery === 0) s.push(`step ${(raw + 1) % U32}`);
  });
  s.push("final", "end");
  return s;
}

describe(`capture merge on the host${note}`, () => {
  const ring = simEdges(3);

  it.skipIf(!hasHostGcc)(`merges a simulated ring over many buffer halves into the firmware's entries, in order${note}`, () => {
    expect(ring.ticks.length).toBeGreaterThan(300);
    // A 64-entry ring: each stream's rings are refilled many times over one capture.
    const r = run(boardScript(ring, 123456789, 64, 8192, 7));
    expect(r.fault).toBe(0);
    expect(r.entries).toEqual(entries(ring));
    // The interrupts' merges released edges while the capture ran, not only at its end.
    expect(r.steps.length).toBeGreaterThan(ring.ticks.length / 32);
    expect(r.steps.slice(0, -1).some((n) => n > 0 && n < ring.ticks.length)).toBe(true);
  });

  it.skipIf(!hasHostGcc)(`counts ticks from the zero across the 32-bit counter's wrap${note}`, () => {
    // The counter wraps in the middle of the ring, and in another run just after the zero.
    for (const zero of [U32 - ring.ticks[Math.floor(ring.ticks.length / 2)] - 1, U32 - 1, U32 - ring.ticks[0]]) {
      const r = run(boardScript(ring, zero, 64, 8192, 5));
      expect(r.fault, `zero ${zero}`).toBe(0);
      expect(r.entries, `zero ${zero}`).toEqual(entries(ring));
    }
  });

  it.skipIf(!hasHostGcc)(`keeps up with a 1.6 MHz square wave (40 ticks per period, the host's fastest ring)${note}`, () => {
    // Synthetic: edges every 20 ticks for 2000 periods, first edge rising, a 256-entry ring.
    const sq: Edges = { ticks: [], levels: [] };
    for (let i = 0; i < 4000; i++) {
      sq.ticks.push(100 + 20 * i);
      sq.levels.push(i % 2 === 0 ? 1 : 0);
    }
    const r = run(boardScript(sq, 7, 256, 8192));
    expect(r.fault).toBe(0);
    expect(r.entries).toEqual(entries(sq));
  });

  it.skipIf(!hasHostGcc)(`holds an edge back until the horizon shows nothing earlier can still arrive${note}`, () => {
    // A rising edge at 1000 alone in its ring: the falling ring might still deliver an earlier edge.
    const r = run(["open 0 8 100", "edge 1000 1", "step 1000", "step 1001", "edge 1500 0", "step 1400", "step 1501", "end"]);
    expect(r.steps).toEqual([0, 1, 1, 2]);
    expect(r.entries).toEqual([2001, 3000]);
    expect(r.fault).toBe(0);
    // A horizon before the zero (merge called while the switch is still closed) lets nothing out.
    const early = run(["open 5000 8 100", "edge 5100 1", "step 4000", "step 5101", "end"]);
    expect(early.steps).toEqual([0, 1]);
  });

  it.skipIf(!hasHostGcc)(`orders two edges latched in the same tick by alternation${note}`, () => {
    // Falling and rising both at 200 after a rising edge at 100: falling first.
    const r = run(["open 0 8 100", "edge 100 1", "edge 200 1", "edge 200 0", "edge 300 0", "final", "end"]);
    expect(r.fault).toBe(0);
    expect(r.entries).toEqual([201, 400, 401, 600]);
    // The very first two edges in one tick: rising first (the comparator starts every ring low).
    const first = run(["open 0 8 100", "edge 50 0", "edge 50 1", "final", "end"]);
    expect(first.fault).toBe(0);
    expect(first.entries).toEqual([101, 100]);
  });

  it.skipIf(!hasHostGcc)(`handles empty streams: nothing at all, or a single edge${note}`, () => {
    const none = run(["open 99 8 100", "step 200000", "final", "end"]);
    expect(none).toMatchObject({ count: 0, fault: 0, entries: [] });
    const one = run(["open 99 8 100", "edge 199 0", "step 150", "final", "end"]);
    expect(one.steps).toEqual([0, 1]);
    expect(one).toMatchObject({ count: 1, fault: 0, entries: [200] });
  });

  it.skipIf(!hasHostGcc)(`reports a lost edge (two of one level in a row) as a fault after the good entries${note}`, () => {
    const k = 101; // drop one falling edge in the middle of the ring
    const lost: Edges = { ticks: ring.ticks.filter((_, i) => i !== k), levels: ring.levels.filter((_, i) => i !== k) };
    expect(ring.levels[k - 1]).toBe(ring.levels[k + 1]);
    const r = run(boardScript(lost, 1000, 64, 8192, 3));
    expect(r.fault).toBe(SAME_LEVEL);
    expect(r.entries.slice(0, k)).toEqual(entries(ring).slice(0, k));
    expect(r.entries).toHaveLength(k + 1);
    expect(r.entries[k]).toBe(FAULT_ENTRY + SAME_LEVEL); // the firmware refuses the capture on it
  });

  it.skipIf(!hasHostGcc)(`the firmware takes the merged entries as a capture and refuses one with a fault entry (ER 11)${note}`, () => {
    // Each entry is revealed once its tick has passed; a fault entry once the edge that showed
    // the fault (`faultAt`) has.
    const firmwareReads = (list: number[], faultAt = 0) => {
      const at = list.map((w) => (w >= FAULT_ENTRY ? faultAt : Math.floor(w / 2)));
      const script = [`capture ${list.length} ${list.map((w, i) => `${at[i]} ${w | 0}`).join(" ")}`, `rx ${Buffer.from(encodeCommand("MS", [1, 2, 200, 8192, 1000, 2000])).toString("hex")}`];
      return ScriptedPort.runScript(script.join("\n") + "\n").text();
    };
    const good = run(boardScript(ring, 77, 64, 8192, 3));
    expect(firmwareReads(good.entries)).toMatch(new RegExp(`^CH .* ${ring.ticks.length}\\*`, "m"));
    const k = 101;
    const lost: Edges = { ticks: ring.ticks.filter((_, i) => i !== k), levels: ring.levels.filter((_, i) => i !== k) };
    const bad = firmwareReads(run(boardScript(lost, 77, 64, 8192, 3)).entries, lost.ticks[k]);
    expect(bad).toMatch(/^ER 11 MS/m);
    expect(bad).not.toMatch(/^CH /m);
  });

  it.skipIf(!hasHostGcc)(`reports a DMA ring lapped before it was read (over-capture) as a fault, never silently${note}`, () => {
    // The interrupts count every half, but no merge runs for more than a ring's worth of edges
    // (interrupts held off): the oldest unread entries were overwritten.
    const s = [`open 0 16 8192`];
    const total = [0, 0];
    let merged = false;
    ring.ticks.slice(0, 80).forEach((t, i) => {
      const lv = ring.levels[i];
      s.push(`edge ${t} ${lv}`);
      total[lv]++;
      if (total[lv] % 8 === 0) s.push("irq");
      if (i === 9) {
        s.push(`step ${t + 1}`);
        merged = true;
      }
    });
    s.push("final", "end");
    expect(merged).toBe(true);
    const r = run(s);
    expect(r.fault).toBe(LAPPED);
    expect(r.entries.slice(0, -1)).toEqual(entries(ring).slice(0, r.entries.length - 1));
    expect(r.entries[r.entries.length - 1]).toBe(FAULT_ENTRY + LAPPED);
    // The same capture merged on every interrupt has no fault.
    expect(run(boardScript({ ticks: ring.ticks.slice(0, 80), levels: ring.levels.slice(0, 80) }, 0, 16, 8192)).fault).toBe(0);
  });

  it.skipIf(!hasHostGcc)(`drops edges before the zero (the comparator falling as the switch closes) but keeps their level${note}`, () => {
    // Left high by the last ring, the comparator falls while the part charges: not an entry.
    const fell = run(["open 1000 8 100", "edge 900 0", "edge 1100 1", "step 1050", "edge 1200 0", "final", "end"]);
    expect(fell.steps).toEqual([0, 2]);
    expect(fell).toMatchObject({ fault: 0, beforeZero: 1, entries: [201, 400] });
    // Dropped without waiting for the horizon; an edge exactly at the zero is tick 0.
    const at = run(["open 1000 8 100", "edge 990 1", "edge 995 0", "step 1000", "edge 1000 1", "final", "end"]);
    expect(at.steps).toEqual([0, 1]);
    expect(at).toMatchObject({ fault: 0, beforeZero: 2, entries: [1] });
    // A rising edge before the zero and another after it: one falling edge was lost between.
    expect(run(["open 1000 8 100", "edge 990 1", "edge 1100 1", "final", "end"]).fault).toBe(SAME_LEVEL);
  });

  it.skipIf(!hasHostGcc)(`refuses edges at or beyond 2^29 ticks (the firmware reads bit 30 of an entry as a flag), and port-reported faults${note}`, () => {
    const late = run(["open 0 8 100", "edge 5 1", `edge ${2 ** 29} 0`, "final", "end"]);
    expect(late).toMatchObject({ fault: LATE, entries: [11, FAULT_ENTRY + LATE] });
    const last = run(["open 0 8 100", "edge 5 1", `edge ${2 ** 29 - 1} 0`, "final", "end"]);
    expect(last).toMatchObject({ fault: 0, entries: [11, (2 ** 29 - 1) * 2] });
    const port = run(["open 0 8 100", "edge 5 1", "step 6", "portfault", "edge 7 0", "final", "end"]);
    expect(port).toMatchObject({ fault: PORT, entries: [11, FAULT_ENTRY + PORT] });
  });

  it("the firmware takes extended-mode ticks up to 2^29 - 1 and refuses 2^29, the merge's limit (bit 30 reads as a flag)", () => {
    const ms = Buffer.from(encodeCommand("MS", [1, 2, 200, 100, 100, 1000])).toString("hex");
    const read = (tick: number) => ScriptedPort.runScript(`capture 2 100 2001 200 ${(tick * 2 + 1) | 0}\nrx ${ms}\n`).text();
    expect(read(2 ** 29 - 1)).toMatch(/^CH .* 2\*/m);
    expect(read(2 ** 29)).toMatch(/^ER 11 MS/m);
  });

  it.skipIf(!hasHostGcc)(`stops at the capacity without a fault (the firmware reports the buffer full)${note}`, () => {
    const r = run(boardScript(ring, 42, 64, 50, 4));
    expect(r.fault).toBe(0);
    expect(r.entries).toEqual(entries(ring).slice(0, 50));
  });

  it.skipIf(!hasHostGcc)(`counts a circular DMA stream's writes from its events and count-down register${note}`, () => {
    // ring of 8: `halves` events of 4 entries each, `remaining` counts down 8..1 per lap.
    const cases: [number, number, number][] = [
      [0, 8, 0], [0, 5, 3], [1, 4, 4], [1, 3, 5], [1, 8, 8], [2, 8, 8], [2, 7, 9], [3, 1, 15], [2, 4, 12], [5, 2, 22],
    ];
    const r = run(cases.map(([h, rem]) => `dma 8 ${h} ${rem}`));
    expect(r.lines).toEqual(cases.map(([, , w]) => `dma ${w}`));
  });

  it.skipIf(!hasHostGcc)(`the shared replay (run on the emulated chip too) reproduces the ring and its checksum${note}`, () => {
    const e = entries(ring);
    const r = run([`replay 4294900000 64 8192 7 ${e.length} ${e.join(" ")}`]);
    expect(r.lines[0]).toBe(`replay ${e.length} 0 ${fnv1a(e)}`);
  });
});
