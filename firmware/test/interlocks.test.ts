// Interlocks the host cannot override: charge time from each drive resistor's ratings, rest
// between pulses from its thermal budget, no pulse into a ring that is still going, and the switch forced open whenever
// a measurement ends abnormally. Runs the release wasm in the simulated tester and, where a
// hardware fault must be injected, on the scripted port.

import { describe, expect, it } from "vitest";
import { ERR_ABORTED, ERR_CAPTURE_FAULT, ERR_CHARGE_LIMIT, ERR_REST, ERR_RINGING } from "../../shared-protocol/src/index.ts";
import { decodeLine, encodeCommand } from "../../host/src/device/frames.ts";
import type { Frame } from "../../host/src/device/frames.ts";
import { parseProfile } from "../../host/src/device/profile.ts";
import type { DeviceProfile } from "../../host/src/device/profile.ts";
import { restBetweenPulses_s } from "../../host/src/ranging/predict.ts";
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

// The thermal budget is checked against a model computed here, in floating point, from the
// profile the firmware reports, and against bounds that need no model at all: no pulse above the
// single-pulse energy rating, and over any interval W at most that rating plus the continuous
// rating times W (which also holds the average of a long burst at or below the continuous
// rating). The rule the model implements, a pulse on a warm resistor counting as more energy as
// its mean dissipation nears the continuous rating, is the resistor makers' for repeated pulses
// (Vishay Sfernice DTO25 datasheet, doc. 51054, "Repetitive or superimposed pulses").

type Drive = DeviceProfile["drives"][number];

function portProfile(port: ScriptedPort): DeviceProfile {
  port.output = [];
  port.rx(encodeCommand("PF"));
  return parseProfile(frames(port).slice(0, -1));
}

function frames(port: ScriptedPort): Frame[] {
  const lines = port.text().split("\n").filter((l) => l.length > 0);
  port.output = [];
  return lines.map((l) => {
    const d = decodeLine(l);
    if (!d.ok) throw new Error(`corrupt line ${JSON.stringify(l)}`);
    return d.frame;
  });
}

/** Worst-case power while the switch is closed (the whole supply across the resistor), W. */
const pulsePower_w = (p: DeviceProfile, d: Drive) => p.supply_v ** 2 / d.ohm;
const budget_j = (d: Drive) => Math.min(d.energy_rating_j!, d.power_rating_w * d.thermal_time_constant_s!);

/** One-node thermal model, exact: heat (J above ambient) at the end of every pulse in the log. */
function heatAtPulseEnds(p: DeviceProfile, d: Drive, log: { at_ticks: number; charge_ticks: number }[]): number[] {
  const tau = d.thermal_time_constant_s!;
  const ptau = pulsePower_w(p, d) * tau;
  let h = 0;
  let t = 0;
  const out: number[] = [];
  for (const e of log) {
    const start = e.at_ticks / p.tick_hz;
    const on = e.charge_ticks / p.tick_hz;
    h *= Math.exp(-(start - t) / tau);
    h = ptau - (ptau - h) * Math.exp(-on / tau);
    t = start + on;
    out.push(h);
  }
  return out;
}

/** Largest energy (worst case) over any interval from a pulse's start to a later pulse's end, less P_cont x W. */
function worstWindowExcess_j(p: DeviceProfile, d: Drive, log: { at_ticks: number; charge_ticks: number }[]): number {
  const pw = pulsePower_w(p, d);
  let worst = -Infinity;
  for (let i = 0; i < log.length; i++) {
    let e = 0;
    for (let j = i; j < log.length; j++) {
      e += (pw * log[j].charge_ticks) / p.tick_hz;
      const w = (log[j].at_ticks + log[j].charge_ticks - log[i].at_ticks) / p.tick_hz;
      worst = Math.max(worst, e - d.power_rating_w * w);
    }
  }
  return worst;
}

/** Pulses `n` times as fast as the firmware allows, waiting exactly the rest it names. */
function burst(port: ScriptedPort, drive: number, charge_us: number, n: number): { refusals: number; owed_ms: number[] } {
  const owed_ms: number[] = [];
  let refusals = 0;
  for (let k = 0; k < n; ) {
    port.rx(encodeCommand("MS", [drive, 0, charge_us, 10, 1, 100]));
    const reply = frames(port);
    if (show(reply[0]) === "OK MS") {
      k++;
      continue;
    }
    expect(show(reply[0])).toMatch(new RegExp(`^ER ${ERR_REST} MS \\d+$`));
    refusals++;
    owed_ms.push(Number(reply[0].fields[2]));
    port.idle(Number(reply[0].fields[2]) * TICKS_PER_MS);
  }
  return { refusals, owed_ms };
}

describe("rest from each drive resistor's thermal budget", () => {
  const profile = portProfile(new ScriptedPort());

  it("the profile gives every resistor a thermal time constant that meets both of its ratings", () => {
    for (const d of profile.drives) {
      expect(d.thermal_time_constant_s).toBeGreaterThan(0);
      // A longer constant than E_pulse / P_cont would let a burst count as one long pulse
      // beyond the single-pulse rating (the bound of the window check below).
      expect(d.thermal_time_constant_s!).toBeLessThanOrEqual(d.energy_rating_j! / d.power_rating_w + 1e-12);
    }
    expect(profile.min_rest_ms).toBe(0);
    expect(profile.rest_per_charge).toBe(0);
  });

  it.each(profile.drives.map((d) => [d.index, d] as const))("drive %i: a burst of its longest pulses stays within the ratings, and uses them", (_i, d) => {
    const port = new ScriptedPort();
    const n = 40;
    const b = burst(port, d.index, d.max_charge_us, n);
    const log = port.pulseLog;
    expect(log).toHaveLength(n);
    const pw = pulsePower_w(profile, d);
    for (const e of log) expect((pw * e.charge_ticks) / profile.tick_hz).toBeLessThanOrEqual(d.energy_rating_j! * (1 + 1e-9));
    // Model-free: over any interval, at most one rated pulse above the continuous rating.
    expect(worstWindowExcess_j(profile, d, log)).toBeLessThanOrEqual(d.energy_rating_j! * (1 + 1e-9));
    const span_s = (log[n - 1].at_ticks + log[n - 1].charge_ticks - log[0].at_ticks) / profile.tick_hz;
    const energy_j = (pw * log.reduce((s, e) => s + e.charge_ticks, 0)) / profile.tick_hz;
    expect(energy_j / span_s).toBeLessThanOrEqual(d.power_rating_w + d.energy_rating_j! / span_s);
    // The model: the heat never passes the budget...
    const heat = heatAtPulseEnds(profile, d, log);
    expect(Math.max(...heat)).toBeLessThanOrEqual(budget_j(d) * (1 + 1e-9));
    if (pw > d.power_rating_w) {
      // ...and the rest is no longer than the budget needs: the burst runs close to it (the
      // rest is named in whole ms and booked from the end of the 1 ms capture window).
      expect(b.refusals).toBeGreaterThan(0);
      expect(Math.max(...heat.slice(1))).toBeGreaterThan(0.9 * budget_j(d));
    } else {
      // A resistor that can take its pulse power for ever owes no rest at all.
      expect(b.refusals).toBe(0);
    }
  });

  it("after the longest pulse on the 10 ohm resistor, owes the rest its profile names, and a short pulse none", () => {
    const port = new ScriptedPort();
    const d = profile.drives[0];
    expect(d.rest_after_max_ms).toBeGreaterThan(0);
    port.rx(encodeCommand("MS", [0, 0, d.max_charge_us, 10, 1, 100]));
    frames(port);
    // A short pulse fits the budget at once (its worst case is 25 µJ, half a percent of it).
    port.rx(encodeCommand("MS", [0, 0, 10, 10, 1, 100]));
    expect(show(frames(port)[0])).toBe("OK MS");
    port.rx(encodeCommand("MS", [0, 0, d.max_charge_us, 10, 1, 100]));
    const refused = frames(port)[0];
    expect(show(refused)).toMatch(new RegExp(`^ER ${ERR_REST} MS \\d+$`));
    // The rest counts from the end of the capture windows (2 x 1 ms), so at most the profile's figure.
    const owed = Number(refused.fields[2]);
    expect(owed).toBeLessThanOrEqual(d.rest_after_max_ms!);
    expect(owed).toBeGreaterThanOrEqual(d.rest_after_max_ms! - 3);
    port.idle((owed - 1) * TICKS_PER_MS);
    port.rx(encodeCommand("MS", [0, 0, d.max_charge_us, 10, 1, 100]));
    expect(show(frames(port)[0])).toMatch(new RegExp(`^ER ${ERR_REST} MS 1$`));
    port.idle(TICKS_PER_MS);
    port.rx(encodeCommand("MS", [0, 0, d.max_charge_us, 10, 1, 100]));
    expect(show(frames(port)[0])).toBe("OK MS");
  });

  it("the profile's rest after the longest pulse is what the model needs, rounded up to whole ms", () => {
    for (const d of profile.drives) {
      const tau = d.thermal_time_constant_s!;
      const ptau = pulsePower_w(profile, d) * tau;
      const fall = Math.exp(-(d.max_charge_us * 1e-6) / tau);
      const h1 = ptau * (1 - fall);
      // Cooling r before the second pulse: ptau - (ptau - h1 e^(-r/tau)) fall <= budget.
      const x = (budget_j(d) - ptau * (1 - fall)) / (h1 * fall);
      const rest_ms = x >= 1 ? 0 : -tau * Math.log(x) * 1e3;
      expect(d.rest_after_max_ms).toBe(Math.max(0, Math.ceil(rest_ms - 1e-6)));
    }
  });

  it("the host's prediction of the rest between repeats matches what the firmware enforces", () => {
    for (const d of profile.drives) {
      const port = new ScriptedPort();
      burst(port, d.index, d.max_charge_us, 12);
      const log = port.pulseLog;
      // Steady state: from the end of one pulse to the start of the next.
      const gap_s = (log[11].at_ticks - (log[10].at_ticks + log[10].charge_ticks)) / profile.tick_hz;
      const predicted_s = restBetweenPulses_s(profile, d.index, d.max_charge_us);
      // The firmware books the heat at the end of the 1 ms capture window, names the rest in
      // whole ms and settles 0.5 ms before the next pulse.
      expect(gap_s).toBeGreaterThanOrEqual(predicted_s - 1e-9);
      expect(gap_s).toBeLessThanOrEqual(predicted_s + 1e-3 + 1e-3 + profile.settle_us * 1e-6 + 1e-9);
    }
  });

  it("each resistor has its own budget, and small pulses never wait", () => {
    const port = new ScriptedPort();
    port.rx(encodeCommand("MS", [0, 0, profile.drives[0].max_charge_us, 10, 1, 100]));
    frames(port);
    port.rx(encodeCommand("MS", [1, 0, profile.drives[1].max_charge_us, 10, 1, 100]));
    expect(show(frames(port)[0])).toBe("OK MS");
    const b = burst(port, 0, 10, 200);
    expect(b.refusals).toBe(0);
  });

  it("an abort before the switch closes books nothing; a pulse whose capture fails is booked in full", () => {
    const max = profile.drives[0].max_charge_us;
    const ms = encodeCommand("MS", [0, 0, max, 10, 1, 100]);
    const aborted = new ScriptedPort();
    aborted.rx(new Uint8Array([...ms, ...encodeCommand("AB")])); // handled in the settle time
    expect(aborted.pulseLog).toHaveLength(0);
    frames(aborted);
    aborted.rx(ms);
    expect(show(frames(aborted)[0])).toBe("OK MS");
    const failed = new ScriptedPort();
    failed.queueCapture([100, 200], [4001, 2000]); // time running backwards: a capture fault
    failed.rx(ms);
    expect(frames(failed).map(show)).toEqual(["OK MS", `ER ${ERR_CAPTURE_FAULT} MS`]);
    failed.rx(ms);
    expect(show(frames(failed)[0])).toMatch(new RegExp(`^ER ${ERR_REST} MS \\d+$`));
  });

  it("a wrap of the 32-bit timer never makes the resistor look cooler than it is", () => {
    const max = profile.drives[0].max_charge_us;
    const ms = encodeCommand("MS", [0, 0, max, 10, 1, 100]);
    // Exactly 2^32 ticks later the timer reads the same: the firmware counts no cooling.
    const wrapped = new ScriptedPort();
    wrapped.rx(ms);
    frames(wrapped);
    wrapped.idle(2 ** 32);
    wrapped.rx(ms);
    expect(show(frames(wrapped)[0])).toMatch(new RegExp(`^ER ${ERR_REST} MS \\d+$`));
    // Half a wrap or more reads as a negative difference: at least 2^31 ticks (33 s), cold.
    const half = new ScriptedPort();
    half.rx(ms);
    frames(half);
    half.idle(2 ** 31 + 5);
    half.rx(ms);
    expect(show(frames(half)[0])).toBe("OK MS");
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
    port.rx(ms(0, 2, 2000, 100, 100, 1000)); // the longest pulse on the 10 ohm resistor
    port.output = [];
    port.rx(ms(0, 2, 2000, 100, 100, 1000));
    expect(strip(port.text().trim().split("\n"))[0]).toMatch(new RegExp(`^ER ${ERR_REST} MS`));
    expect(port.log.pulses).toBe(1);
    expect(port.log.listens).toBe(1);
  });
});
