// "No allocation after start": every buffer is created when the module starts; commands,
// measurements and streaming reuse them. Runs the probe build (release flags + fw_heap_mark).

import { expect, it } from "vitest";
import { encodeCommand } from "../../host/src/device/frames.ts";
import { ScriptedPort } from "./scripted-port.ts";
import { SimLink } from "./sim-link.ts";

it("allocates nothing after start, whatever the host sends", () => {
  const link = new SimLink({ firmware: "probe" });
  const mark = (link.sim.fw as unknown as { fw_heap_mark(): number }).fw_heap_mark;
  const before = mark();
  const block = mark() - before; // the probe's own empty block
  const t = (tag: string, ...a: number[]) => new TextDecoder().decode(encodeCommand(tag, a));
  link.raw(t("ID") + t("PF") + t("ZZ") + "garbage\n" + "X".repeat(500) + "\n");
  for (let i = 0; i < 5; i++) {
    link.raw(t("MS", 1, 2, 200, 8192, 1000, 2000));
    link.raw(t("CR"));
    link.sim.advance(0.05);
  }
  link.raw(t("MS", 1, 2, 200, 8192, 1000, 2000) + t("AB"));
  // Self-test, counters, a capture cut short (ring watch), refusals while it rings.
  link.sim.advance(0.05);
  link.raw(t("ST") + t("CN") + t("MS", 1, 2, 200, 20, 1000, 2000));
  link.sim.advance(0.021);
  link.raw(t("MS", 1, 2, 200, 20, 1000, 2000) + t("ST") + t("AB"));
  const after = mark();
  expect(after - before).toBe(2 * block);
});

it("allocates nothing in raw-capture mode or on capture faults", () => {
  const link = new SimLink({ firmware: "probe", raw_capture: { bits: 16, phase_ticks: 777, overflow_latency_ticks: 40 } });
  const mark = (link.sim.fw as unknown as { fw_heap_mark(): number }).fw_heap_mark;
  const before = mark();
  const block = mark() - before;
  const t = (tag: string, ...a: number[]) => new TextDecoder().decode(encodeCommand(tag, a));
  link.raw(t("PF") + t("MS", 1, 2, 200, 8192, 1000, 2000));
  link.sim.advance(0.05);
  link.raw(t("CR") + t("ST"));
  expect(mark() - before).toBe(2 * block);

  const port = new ScriptedPort("probe", { bits: 8 });
  const pmark = (port.fw as unknown as { fw_heap_mark(): number }).fw_heap_mark;
  const p0 = pmark();
  port.queueCapture([0, 1], [0x40000000, (300 << 2) | 1]); // a capture fault
  port.rx(encodeCommand("MS", [1, 2, 200, 100, 100, 1000]));
  expect(pmark() - p0).toBe(block); // only the probe's own block between the two marks
});
