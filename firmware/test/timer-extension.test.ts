// Raw-capture mode: the port delivers N-bit timer values, an open entry and overflow markers;
// the firmware extends them to ticks since the switch opened. Every phase of the wrap is
// covered: edges on the last counts before it, on it, inside the overflow interrupt's latency
// (recorded before their marker, flagged pending) and after it.

import { describe, expect, it } from "vitest";
import { ERR_CAPTURE_FAULT } from "../../shared-protocol/src/index.ts";
import { encodeCommand } from "../../host/src/device/frames.ts";
import { readCapture, rawEntries } from "./capture-stream.ts";
import { ScriptedPort } from "./scripted-port.ts";
import { SimLink } from "./sim-link.ts";

const settings = { drive: 1, tank: 2, charge_us: 200, edge_limit: 8192, timeout_ms: 1000, quiet_us: 2000 };
const MS = encodeCommand("MS", [1, 2, 200, 8192, 1000, 2000]);

/** Alternating edges at `ticks`, run through an 8-bit raw port; returns what the host decodes. */
function throughRawPort(ticks: number[], openRaw: number, latency: number) {
  const levels = ticks.map((_, i) => (i % 2 === 0 ? 1 : 0));
  const port = new ScriptedPort("release", { bits: 8 });
  const e = rawEntries(ticks, levels, 8, openRaw, latency, ticks[ticks.length - 1] + 200_000);
  port.queueCapture(e.at, e.words);
  port.rx(MS);
  return { got: readCapture(port.text(), settings), levels };
}

describe("timer extension, scripted 8-bit port", () => {
  // Every residue of the 8-bit counter, for every open phase in steps of 37 and several
  // interrupt latencies: 97 is odd, so 97 k mod 256 visits all 256 phases.
  const ticks = Array.from({ length: 600 }, (_, k) => 40 + 97 * k);
  it.each([0, 1, 5, 100])("every edge phase is extended exactly, overflow latency %i ticks", (latency) => {
    for (let openRaw = 0; openRaw < 256; openRaw += 37) {
      const { got, levels } = throughRawPort(ticks, openRaw, latency);
      expect(got.ticks).toEqual(ticks);
      expect(got.levels).toEqual(levels);
    }
  });

  it("edges exactly on the wrap, one before and one after, with the marker both sides of them", () => {
    for (const latency of [0, 1, 2, 3, 127]) {
      for (const openRaw of [0, 1, 254, 255]) {
        const base = 256 - openRaw; // first wrap, in ticks since opening
        const ticks = [base - 1, base, base + 1, base + 2, 2 * base + 255, 3 * base + 256];
        const sorted = [...new Set(ticks)].sort((a, b) => a - b);
        expect(throughRawPort(sorted, openRaw, latency).got.ticks).toEqual(sorted);
      }
    }
  });

  it("long silences: many overflows between two edges", () => {
    const ticks = [10, 10 + 256 * 300 + 7, 10 + 256 * 300 + 8];
    expect(throughRawPort(ticks, 200, 3).got.ticks).toEqual(ticks);
  });

  it.each([
    ["no open entry", [0, 1], [(5 << 2) | 1, (9 << 2) | 0]],
    ["a second open entry", [0, 1, 2], [0x40000000, 0x40000000, (9 << 2) | 1]],
    ["a capture value wider than the timer", [0, 1], [0x40000000, (300 << 2) | 1]],
    ["an overflow marker counting zero", [0, 1, 2], [0x40000000, 1 << 31, (9 << 2) | 1]],
    ["a capture before the open value without a wrap", [0, 1], [0x40000000 | 50, (10 << 2) | 1]],
  ])("refuses %s as a capture fault and opens the switch", (_what, at, words) => {
    const port = new ScriptedPort("release", { bits: 8 });
    port.queueCapture(at, words);
    port.rx(MS);
    expect(port.text()).toMatch(new RegExp(`^OK MS\\*[0-9A-F]{4}\\nER ${ERR_CAPTURE_FAULT} MS\\*[0-9A-F]{4}\\n$`));
    expect(port.log.switchClosed).toBe(false);
  });

  it("refuses to pulse at all with a timer width it cannot extend", () => {
    const port = new ScriptedPort("release", { bits: 4 });
    port.rx(MS);
    expect(port.text()).toMatch(new RegExp(`^ER ${ERR_CAPTURE_FAULT} MS\\*`));
    expect(port.log.pulses).toBe(0);
  });
});

describe("timer extension in the simulated tester (16-bit timer, physical ring)", () => {
  const part = { inductance_h: 330e-6, series_ohm: 0.4, self_capacitance_f: 0 };
  it.each([0, 40, 1000])("streams the ring exactly for wraps at 24 phases, overflow latency %i ticks", (latency) => {
    let nearWrap = 0;
    for (let phase = 0; phase < 65536; phase += 2731) {
      const link = new SimLink({ part, raw_capture: { bits: 16, phase_ticks: phase, overflow_latency_ticks: latency } });
      const text = link.raw(new TextDecoder().decode(MS)).join("\n") + "\n";
      const truth = link.sim.lastEdges!;
      const got = readCapture(text, settings);
      expect(got.ticks).toEqual(truth.ticks.slice(0, got.ticks.length));
      expect(got.ticks.length).toBe(truth.ticks.length);
      expect(got.levels).toEqual(truth.levels.slice(0, got.levels.length));
      // Count edges that fell inside the race window, to show the sweep reached it.
      const open = Math.floor(200 * 64 + 500 * 64); // settle + charge, in ticks after reset
      for (const t of got.ticks) if (((open + phase + t) % 65536) < Math.max(latency, 1)) nearWrap++;
    }
    if (latency > 0) expect(nearWrap).toBeGreaterThan(0);
  });
});

describe("timer extension in the simulated tester (8-bit timer: a wrap every 4 µs)", () => {
  const part = { inductance_h: 330e-6, series_ohm: 0.4, self_capacitance_f: 0 };
  it("extends every edge exactly, and the edges land on every one of the 256 counter values", () => {
    const latency = 40;
    const seen = new Set<number>();
    let pendingRace = 0;
    for (let phase = 0; phase < 256; phase += 29) {
      const link = new SimLink({ part, seed: 2 + phase, raw_capture: { bits: 8, phase_ticks: phase, overflow_latency_ticks: latency } });
      const text = link.raw(new TextDecoder().decode(MS)).join("\n") + "\n";
      const truth = link.sim.lastEdges!;
      const got = readCapture(text, settings);
      expect(got.ticks).toEqual(truth.ticks);
      expect(got.levels).toEqual(truth.levels);
      // A fresh tester pulses after the 500 µs settle and opens 200 µs later: 44800 ticks.
      const openRaw = (44800 + phase) % 256;
      for (const t of got.ticks) {
        const counter = (openRaw + t) % 256;
        seen.add(counter);
        if (counter < latency && t >= 256 - openRaw) pendingRace++; // recorded before its wrap's marker
      }
    }
    expect(seen.size).toBe(256);
    expect(pendingRace).toBeGreaterThan(100);
  });
});
