// "No allocation after start": every buffer is created when the module starts; commands,
// measurements and streaming reuse them. Runs the probe build (release flags + fw_heap_mark).

import { expect, it } from "vitest";
import { encodeCommand } from "../../host/src/device/frames.ts";
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
  const after = mark();
  expect(after - before).toBe(2 * block);
});
