// Interlocks the host cannot override: charge time from each drive resistor's ratings, rest
// between pulses, no pulse into a ring that is still going, and the switch forced open whenever
// a measurement ends abnormally. Runs the release wasm in the simulated tester and, where a
// hardware fault must be injected, on the scripted port.

import { describe, expect, it } from "vitest";
import { ERR_ABORTED, ERR_CAPTURE_FAULT, ERR_CHARGE_LIMIT, ERR_REST, ERR_RINGING } from "../../shared-protocol/src/index.ts";
import { encodeCommand } from "../../host/src/device/frames.ts";
import { parseProfile } from "../../host/src/device/profile.ts";
import { ScriptedPort } from "./scripted-port.ts";
import { SimLink, show } from "./sim-link.ts";

const strip = (lines: string[]) => lines.map((l) => l.replace(/\*[0-9A-F]{4}$/, ""));
const TICKS_PER_MS = 64000;

describe("charge-time interlock from the resistor's energy rating", () => {
  const link = new SimLink();
  const p = parseProfile(link.send("PF").slice(0, -1));

  it.each(p.drives.map((d) => [d.index, d] as const))("drive %i: limit = min(E / (V²/R), board cap)", (_i, d) => {
    // Worst case is the whole supply across the resistor: P = V²/R, t = E / P (Joule heating).
    const byEnergy_us = Math.floor((d.energy_rating_j! / (p.supply_v ** 2 / d.ohm)) * 1e6 + 1e-6);
    expect(d.max_charge_us).toBe(Math.min(byEnergy_us, p.max_charge_us!));
  });

  it.each(p.drives.map((d) => [d.index, d.max_charge_us] as const))("drive %i accepts %i µs and refuses one more", (drive, max) => {
    const l = new SimLink({ part: null });
    expect(show(l.send("MS", drive, 3, max + 1, 10, 1, 1000)[0])).toBe(`ER ${ERR_CHARGE_LIMIT} MS`);
    expect(l.sim.stats.pulses).toBe(0);
    expect(show(l.send("MS", drive, 3, max, 10, 1, 1000)[0])).toBe("OK MS");
    expect(l.sim.stats.pulses).toBe(1);
  });
});

describe("rest between pulses", () => {
  it("after the longest pulse on the 10 ohm resistor, owes the rest its profile names", () => {
    const link = new SimLink({ part: null });
    const p = parseProfile(link.send("PF").slice(0, -1));
    const d = p.drives[0];
    link.send("MS", 0, 3, d.max_charge_us, 10, 1, 1000);
    const refused = link.send("MS", 0, 3, 1, 10, 1, 1000);
    expect(show(refused[0])).toMatch(new RegExp(`^ER ${ERR_REST} MS \\d+$`));
    // The rest counts from the end of the capture window (1 ms), so at most the profile's figure.
    const owed = Number(refused[0].fields[2]);
    expect(owed).toBeLessThanOrEqual(d.rest_after_max_ms!);
    expect(owed).toBeGreaterThanOrEqual(d.rest_after_max_ms! - 2);
    link.sim.advance(owed / 1000);
    expect(show(link.send("MS", 0, 3, 1, 10, 1, 1000)[0])).toBe("OK MS");
  });
});

describe("no pulse while the previous ring still produces edges", () => {
  it("refuses with the ring's remaining quiet time, then accepts once it has died", () => {
    const link = new SimLink();
    // An edge limit of 20 stops the capture long before this high-Q ring is over.
    const first = link.send("MS", 1, 2, 200, 20, 1000, 2000);
    expect(show(first[first.length - 1])).toMatch(/^CE \d+ 20 [0-9A-F]{4} 1$/);
    link.sim.advance(0.021); // the rest is over; the ring is not
    const refused = link.send("MS", 1, 2, 200, 8192, 1000, 2000);
    expect(refused.map(show)).toHaveLength(1);
    expect(show(refused[0])).toMatch(new RegExp(`^ER ${ERR_RINGING} MS \\d+$`));
    expect(link.sim.stats.pulses).toBe(1);
    for (let i = 0; i < 100; i++) {
      const r = link.send("MS", 1, 2, 200, 8192, 1000, 2000);
      if (show(r[0]) === "OK MS") break;
      expect(Number(r[0].fields[0])).toBe(ERR_RINGING);
      link.sim.advance(Number(r[0].fields[2]) / 1000);
    }
    expect(link.sim.stats.pulses).toBe(2);
  });

  it("works the same with a 16-bit raw-capture port, whose overflow markers arrive in silence", () => {
    const link = new SimLink({ raw_capture: { bits: 16, phase_ticks: 999, overflow_latency_ticks: 40 } });
    link.send("MS", 1, 2, 200, 20, 1000, 2000);
    link.sim.advance(0.021);
    let refusals = 0;
    for (let i = 0; i < 100; i++) {
      const r = link.send("MS", 1, 2, 200, 8192, 1000, 2000);
      if (show(r[0]) === "OK MS") break;
      expect(Number(r[0].fields[0])).toBe(ERR_RINGING);
      refusals++;
      link.sim.advance(Number(r[0].fields[2]) / 1000);
    }
    expect(refusals).toBeGreaterThan(0);
    expect(link.sim.stats.pulses).toBe(2);
  });

  it.each([
    ["a listen buffer that filled up counts as activity (edges after it could be lost)", 600, `ER ${ERR_RINGING} MS 1`],
    ["markers alone, without filling the buffer, are silence", 100, "OK MS"],
  ])("%s", (_what, markers, expected) => {
    const port = new ScriptedPort("release", { bits: 8 });
    // Two edges reach the edge limit of 2: the ring may go on, so the firmware listens.
    port.queueCapture([0, 0, 10, 20], [0x40000000 | 5, (15 << 2) | 1, (25 << 2) | 0, (35 << 2) | 1]);
    const at = Array.from({ length: markers }, (_, k) => 251 + k * 256);
    port.queueHeard([0, ...at], [0x40000000 | 5, ...at.map(() => (1 << 31) | 1)]);
    port.rx(encodeCommand("MS", [1, 2, 200, 2, 100, 1000]));
    expect(port.text()).toMatch(/CE 2 2 [0-9A-F]{4} 1\*/);
    port.output = [];
    port.idle(25 * TICKS_PER_MS);
    port.rx(encodeCommand("MS", [1, 2, 200, 2, 100, 1000]));
    expect(strip(port.text().trim().split("\n"))[0]).toBe(expected);
  });

  it.each([
    ["a silent self-test counts toward the quiet time", 1000, [] as number[], ["OK MS"]],
    ["a self-test cannot shorten a longer quiet time", 50000, [] as number[], [`ER ${ERR_RINGING} MS 30`]],
    ["stray edges in the self-test restart the watch", 1000, [100], [`ER ${ERR_RINGING} MS 20`]],
  ])("%s", (_what, quietUs, strayAt, expected) => {
    const port = new ScriptedPort();
    port.queueCapture([10, 20], [21, 40]); // reaches the edge limit of 2: the ring may go on
    port.queueHeard([], []); // the watch hears nothing...
    port.queueHeard(strayAt, strayAt.map((t, i) => t * 2 + (1 - (i % 2)))); // ...nor the self-test, or a little
    port.rx(encodeCommand("MS", [1, 2, 200, 2, 100, quietUs]));
    port.rx(encodeCommand("ST"));
    port.output = [];
    port.rx(encodeCommand("MS", [1, 2, 200, 2, 100, 1000]));
    expect(strip(port.text().trim().split("\n")).slice(0, 1)).toEqual(expected);
  });

  it("does not watch after a capture that ended because the ring went quiet", () => {
    const link = new SimLink();
    link.send("MS", 1, 2, 200, 8192, 1000, 2000);
    link.sim.advance(0.021);
    expect(show(link.send("MS", 1, 2, 200, 8192, 1000, 2000)[0])).toBe("OK MS");
  });
});

describe("the switch is forced open whenever a measurement ends abnormally", () => {
  const ms = (...a: number[]) => encodeCommand("MS", a);

  it("on abort while charging", () => {
    const port = new ScriptedPort();
    port.rx(new Uint8Array([...ms(1, 2, 200, 100, 100, 1000), ...encodeCommand("AB")]));
    expect(strip(port.text().trim().split("\n"))).toEqual(["OK MS", `ER ${ERR_ABORTED} MS`, "OK AB"]);
    expect(port.log.switchClosed).toBe(false);
  });

  it("on the capture window's timeout", () => {
    const port = new ScriptedPort();
    port.queueCapture([100, 200], [200, 401]);
    port.rx(ms(1, 2, 200, 100, 5, 1_000_000));
    expect(port.text()).toMatch(/CE 2 2 [0-9A-F]{4} 2\*/);
    expect(port.log.switchClosed).toBe(false);
  });

  it.each([
    ["a capture count that shrinks", 5000, 0],
    ["a capture count beyond the buffer", 5000, 9999],
  ])("on %s (a stuck capture), reporting a capture fault", (_what, at, count) => {
    const port = new ScriptedPort();
    // Seen by the first capture poll (1 tick after opening); the count goes wrong before the next.
    port.queueCapture([0, 1, 1], [1, 2, 5]);
    port.stuckNext(at, count);
    port.rx(ms(1, 2, 200, 100, 100, 1000));
    expect(strip(port.text().trim().split("\n"))).toEqual(["OK MS", `ER ${ERR_CAPTURE_FAULT} MS`]);
    expect(port.log.switchClosed).toBe(false);
  });

  it("on entries that cannot be a capture (time running backwards)", () => {
    const port = new ScriptedPort();
    port.queueCapture([100, 200], [4001, 2000]);
    port.rx(ms(1, 2, 200, 100, 100, 1000));
    expect(strip(port.text().trim().split("\n"))).toEqual(["OK MS", `ER ${ERR_CAPTURE_FAULT} MS`]);
    expect(port.log.switchClosed).toBe(false);
  });

  it("after a capture fault, watches the ring and owes the rest like any pulse", () => {
    const port = new ScriptedPort();
    port.queueCapture([100, 200], [4001, 2000]);
    port.rx(ms(1, 2, 200, 100, 100, 1000));
    port.output = [];
    port.rx(ms(1, 2, 200, 100, 100, 1000));
    expect(strip(port.text().trim().split("\n"))[0]).toMatch(new RegExp(`^ER ${ERR_REST} MS`));
    expect(port.log.pulses).toBe(1);
    expect(port.log.listens).toBe(1);
  });
});
