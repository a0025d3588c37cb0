// Link faults between host and simulated tester. For each one the host must either recover the
// very capture the hardware recorded (through CR, which never pulses again) or fail with a coded
// error; a damaged or partial capture is never returned. Timeouts are short (FAST_CLIENT), so a
// lost line costs a fraction of a second; vitest's per-test timeout is the bound on every wait.

import { describe, expect, it } from "vitest";
import { DeviceError, DeviceTimeoutError } from "../../host/src/device/errors.ts";
import { encodeCommand, ProtocolError } from "../../host/src/device/frames.ts";
import { TransportError } from "../../host/src/transport/transport.ts";
import { measurePart } from "../../host/src/measure/measure-part.ts";
import { caught, matchesTruth, openRig, QUICK_PART, settle, SETTING } from "./sim-rig.ts";
import type { Rig } from "./sim-rig.ts";

/** Capture lines start after the OK MS line: CH is line 1 of the reply, the first CD line 2. */
const OK_MS = 0;
const CH = 1;
const FIRST_CD = 2;

async function recovers(rig: Rig): Promise<void> {
  const raw = await rig.client.measure(SETTING);
  await settle();
  expect(matchesTruth(raw, rig.link.sim)).toBe(true);
  expect(raw.end_reason).toBe("quiet");
  expect(rig.pulses()).toBe(1); // the capture was fetched again, the part was not pulsed again
}

describe("link faults inside a capture stream are detected and the capture is fetched again", () => {
  const cases: [string, (r: Rig) => void][] = [
    ["a flipped bit in a data line", (r) => r.faults.arm("flip_bit", FIRST_CD)],
    ["a flipped bit in the header", (r) => r.faults.arm("flip_bit", CH)],
    ["a lost byte in a data line", (r) => r.faults.arm("drop_byte", FIRST_CD)],
    ["a duplicated data line", (r) => r.faults.arm("duplicate_line", FIRST_CD)],
    ["two data lines swapped", (r) => r.faults.arm("reorder_lines", CH)],
    ["a lost byte and a flipped bit on the first two attempts", (r) => {
      r.faults.arm("drop_byte", FIRST_CD);
      r.faults.arm("flip_bit", FIRST_CD + 4);
    }],
  ];
  for (const [name, inject] of cases) {
    it(name, async () => {
      const rig = await openRig({ seed: 11 });
      inject(rig);
      await recovers(rig);
      expect(rig.faults.sent.CR).toBeGreaterThanOrEqual(1);
      const injected = Object.values(rig.faults.injected).reduce((a, b) => a + b, 0);
      expect(injected).toBeGreaterThanOrEqual(1);
      await rig.close();
    });
  }

  it("a lost newline (two lines merged) is caught by the frame CRC", async () => {
    const rig = await openRig({ seed: 12 });
    rig.faults.arm("drop_byte", FIRST_CD, -1);
    await recovers(rig);
    await rig.close();
  });

  it("a capture damaged on every attempt fails with CAPTURE_DAMAGED after two resends", async () => {
    const rig = await openRig({ seed: 13, faults: { rates: { flip_bit: 1 }, only_tags: ["CD"] } });
    const e = await caught(() => rig.client.measure(SETTING));
    expect(e).toBeInstanceOf(ProtocolError);
    expect((e as ProtocolError).code).toBe("CAPTURE_DAMAGED");
    expect(rig.faults.sent.CR).toBe(2);
    expect(rig.pulses()).toBe(1);
    await rig.close();
  });
});

describe("link faults the host cannot repair end in a coded error, and never in a capture", () => {
  it("a line held back for good mid-stream: the reply times out, the capture is fetched again (one pulse), nothing partial is returned", async () => {
    const rig = await openRig({ seed: 21, faults: { stall_ms: Infinity } });
    rig.faults.arm("stall", FIRST_CD + 1);
    await recovers(rig);
    expect(rig.faults.sent.CR ?? 0).toBeGreaterThanOrEqual(1);
    await rig.close();
  });

  it("a short stall mid-stream (under the reply timeout) only delays the same capture", async () => {
    const rig = await openRig({ seed: 22, faults: { stall_ms: 40 } });
    rig.faults.arm("stall", FIRST_CD + 1);
    await recovers(rig);
    expect(rig.faults.sent.CR ?? 0).toBe(0);
    await rig.close();
  });

  it("a slow device (every line late, within the reply timeout) gives the same capture", async () => {
    const rig = await openRig({ seed: 23, faults: { line_delay_ms: 3 } });
    await recovers(rig);
    await rig.close();
  });

  it("a tester reset mid-capture ends in CAPTURE_LOST (its resend is refused); the restarted tester measures again", async () => {
    const rig = await openRig({ seed: 24 });
    rig.faults.arm("reset", FIRST_CD + 1);
    const e = await caught(() => rig.client.measure(SETTING));
    expect((e as { code?: string }).code).toBe("CAPTURE_LOST");
    expect(rig.link.generation).toBe(1);
    const raw = await rig.client.measure(SETTING);
    await settle();
    expect(matchesTruth(raw, rig.link.sim)).toBe(true);
    expect(rig.link.sim.stats.pulses).toBe(1);
    await rig.close();
  });

  it("recall returns the tester's held capture again without a pulse; before any pulse it is CAPTURE_LOST", async () => {
    const rig = await openRig({ seed: 26 });
    const none = await caught(() => rig.client.recall(SETTING));
    expect((none as { code?: string }).code).toBe("CAPTURE_LOST");
    const raw = await rig.client.measure(SETTING);
    const again = await rig.client.recall(SETTING);
    await settle();
    expect(again.ticks).toEqual(raw.ticks);
    expect(again.levels).toEqual(raw.levels);
    expect(matchesTruth(again, rig.link.sim)).toBe(true);
    expect(rig.pulses()).toBe(1);
    await rig.close();
  });

  it("the port vanishing mid-capture rejects at once with a disconnected TransportError, and so does every later call", async () => {
    const rig = await openRig({ seed: 25 });
    const p = rig.client.measure(SETTING);
    setImmediate(() => rig.faults.unplug());
    const e = await caught(() => p);
    expect(e).toBeInstanceOf(TransportError);
    expect((e as TransportError).disconnected).toBe(true);
    const e2 = await caught(() => rig.client.measure(SETTING));
    expect(e2).toBeInstanceOf(TransportError);
    await rig.close();
  });

  it("a corrupted OK MS fails with LINK_CORRUPT after the one pulse; the next reading is whole", async () => {
    const rig = await openRig({ seed: 26 });
    rig.faults.arm("flip_bit", OK_MS, 1);
    const e = await caught(() => rig.client.measure(SETTING));
    expect((e as ProtocolError).code).toBe("LINK_CORRUPT");
    expect(rig.pulses()).toBe(1);
    const raw = await rig.client.measure(SETTING);
    await settle();
    expect(matchesTruth(raw, rig.link.sim)).toBe(true);
    expect(rig.pulses()).toBe(2);
    await rig.close();
  });

  it("a command damaged on its way to the tester is refused (ER 1) without a pulse", async () => {
    for (const kind of ["tx_flip_bit", "tx_drop_byte"] as const) {
      const rig = await openRig({ seed: 27 });
      rig.faults.arm(kind, 0, 3);
      const e = await caught(() => rig.client.measure(SETTING));
      expect(e).toBeInstanceOf(DeviceError);
      expect((e as DeviceError).code).toBe("LINK_CRC");
      expect(rig.pulses()).toBe(0);
      await rig.close();
    }
  });

  it("a command whose newline is lost times out, and the next command is refused, not misread", async () => {
    const rig = await openRig({ seed: 28 });
    rig.faults.arm("tx_drop_byte", 0, -1);
    const e = await caught(() => rig.client.measure(SETTING));
    expect((e as { code?: string }).code).toBe("DEVICE_SILENT"); // it answered ID and PF before
    const e2 = await caught(() => rig.client.measure(SETTING));
    expect(["LINK_CRC", "LINK_SYNTAX", "LINE_TOO_LONG"]).toContain((e2 as { code?: string }).code);
    expect(rig.pulses()).toBe(0);
    const raw = await rig.client.measure(SETTING);
    await settle();
    expect(matchesTruth(raw, rig.link.sim)).toBe(true);
    await rig.close();
  });

  it("a stalled reading through measurePart is fetched again; only the pulse's own whole capture is analysed", async () => {
    const rig = await openRig({ seed: 29, faults: { stall_ms: Infinity } });
    rig.faults.arm("stall", FIRST_CD);
    const estimate = { l_h: QUICK_PART.inductance_h, q_points: [{ q: 20, tank_f: 10e-9 }], fitted: false };
    const r = await measurePart(rig.client, { drive: SETTING.drive, tank: SETTING.tank, charge_us: SETTING.charge_us, estimate });
    await settle();
    const raw = { ticks: r.capture.edges.map((e) => e[0]), levels: r.capture.edges.map((e) => e[1]) };
    expect(matchesTruth(raw as never, rig.link.sim)).toBe(true);
    expect(rig.pulses()).toBe(1);
    await rig.close();
  });
});

describe("garbage at connect", () => {
  it("whole garbage lines left in the pipe are discarded and the tester is identified", async () => {
    const rig = await openRig({ seed: 31, faults: { garbage_at_connect: "\x00\xff~~boot 1.2\r\n#$%\n" } });
    expect(rig.client.identity.protocol_version).toBe(1);
    expect(rig.faults.injected.garbage_at_connect).toBe(1);
    await recovers(rig);
    await rig.close();
  });

  it("an unterminated garbage tail fails the connect with a coded error, and a second connect succeeds", async () => {
    const e = await caught(() => openRig({ seed: 32, faults: { garbage_at_connect: "\xfe\x13partial" } }));
    const code = (e as { code?: string } | undefined)?.code;
    // Either the host discards the fragment (no error) or refuses with a code; never a bare Error.
    if (e !== undefined) expect(["LINK_CORRUPT", "BAD_REPLY"]).toContain(code);
    const rig = await openRig({ seed: 32 });
    await recovers(rig);
    await rig.close();
  });
});

describe("late replies after a timeout", () => {
  // Lines of a timed-out measurement can arrive after the next MS was sent: OK MS, then a
  // complete, checksummed capture of the previous pulse. The client must not take them as the
  // next measurement's reply (host/src/device/client.ts ties a capture stream to its request
  // token). Here the part is changed in between (a sorting line), so taking them would report the
  // previous part's ring for the new part.
  it("a capture delivered after its measurement timed out is never returned for the next measurement", async () => {
    // Times (ms after MS): the reply times out at 500, the next MS goes out at about 700, the
    // held lines land at 1000, and that MS would time out at about 1200: wide margins either side.
    const rig = await openRig({ seed: 41, faults: { stall_ms: 1000 }, client: { reply_timeout_ms: 500 } });
    rig.faults.arm("stall", OK_MS); // everything from OK MS on is held back
    const e = await caught(() => rig.client.measure(SETTING));
    expect((e as { code?: string }).code).toBe("DEVICE_SILENT");
    // The operator puts the next part on the clips and measures again while the old reply is in flight.
    await new Promise((r) => setTimeout(r, 200));
    rig.link.sim.part = { ...QUICK_PART, inductance_h: 1.5e-3 };
    const second = await caught(async () => {
      const raw = await rig.client.measure(SETTING);
      await settle();
      expect(matchesTruth(raw, rig.link.sim)).toBe(true);
    });
    await rig.close();
    // Acceptable outcomes: the new pulse's own capture, or a coded error.
    if (second !== undefined) expect(typeof (second as { code?: unknown }).code).toBe("string");
  });
});

describe("error codes on link failures", () => {
  // A failure of the link itself (port unplugged, write on a closed port) carries a stable code
  // like every other error a user can meet (TransportError: LINK_DISCONNECTED, LINK_ERROR), so
  // the CLI prints it with one.
  it("an unplugged port is reported with a stable code", async () => {
    const rig = await openRig({ seed: 51 });
    rig.faults.unplug();
    const e = await caught(() => rig.client.measure(SETTING));
    expect(e).toBeInstanceOf(TransportError);
    expect(typeof (e as { code?: unknown }).code).toBe("string");
  });
});

describe("a reply that outlives its command", () => {
  // A corrupt line that is a leftover of the previous exchange (here: the capture behind a
  // damaged OK MS, still in flight when the next MS is written) must not make a later reading
  // return the previous pulse's capture as verified: with parts swapped between readings, a part
  // would get its predecessor's value. The client drains the link after a corrupt reply and
  // accepts a capture only with its own request token (host/src/device/client.ts, command()).
  it("after two damaged lines in a row, every reading still returns its own pulse's capture", async () => {
    const rig = await openRig({ seed: 61 });
    rig.faults.arm("flip_bit", OK_MS, 1); // reading 1: OK MS damaged -> LINK_CORRUPT, its capture still in flight
    rig.faults.arm("flip_bit", FIRST_CD, 1); // that capture's data line damaged too, arriving during reading 2
    expect((await caught(() => rig.client.measure(SETTING)) as { code?: string }).code).toBe("LINK_CORRUPT");
    // Since the client drains the link after a corrupt reply and ties captures to their request
    // token, the second reading no longer inherits the first one's damage: it may succeed (and
    // must then be its own) or fail with a code.
    const second = await caught(async () => {
      const raw = await rig.client.measure(SETTING);
      await settle();
      expect(matchesTruth(raw, rig.link.sim)).toBe(true);
    });
    if (second !== undefined) expect(typeof (second as { code?: unknown }).code).toBe("string");
    const parts = [{ ...QUICK_PART, inductance_h: 1.5e-3 }, QUICK_PART, { ...QUICK_PART, inductance_h: 0.68e-3 }];
    const own: boolean[] = [];
    for (const part of parts) {
      rig.link.sim.part = part;
      const raw = await rig.client.measure(SETTING);
      await settle();
      own.push(matchesTruth(raw, rig.link.sim));
    }
    await rig.close();
    expect(own).toEqual([true, true, true]);
  });

  // The same finding with a single fault: a bit flip on the way to the tester turns the MS
  // line's '*' (0x2A) into a newline (0x0A), so the tester answers two lines with two ER frames.
  // The first fails that reading, the second fails the next one before its own OK MS arrives, and
  // the reading after that returns the next one's pulse.
  it("a command split in two by a flipped bit does not shift later replies", async () => {
    const rig = await openRig({ seed: 62 });
    const star = new TextDecoder().decode(encodeCommand("MS", [SETTING.drive, SETTING.tank, SETTING.charge_us, SETTING.edge_limit, SETTING.timeout_ms, SETTING.quiet_us])).indexOf("*");
    rig.faults.arm("tx_flip_bit", 0, star, 5);
    // The flipped bit lands in the command (whose request token moves the '*'): the tester cannot
    // read the line, either as a split one (LINK_SYNTAX) or as a CRC mismatch (LINK_CRC).
    expect(["LINK_SYNTAX", "LINK_CRC"]).toContain((await caught(() => rig.client.measure(SETTING)) as { code?: string }).code);
    const own: boolean[] = [];
    const outcomes: string[] = [];
    for (let k = 0; k < 3; k++) {
      const raw = await caught(async () => {
        const r = await rig.client.measure(SETTING);
        await settle();
        own.push(matchesTruth(r, rig.link.sim));
      });
      outcomes.push(raw === undefined ? "ok" : String((raw as { code?: string }).code));
    }
    await rig.close();
    // Readings after the split may fail with a code, but every one that succeeds is its own.
    expect(own.every((x) => x)).toBe(true);
    expect(outcomes).toEqual(["ok", "ok", "ok"]);
  });
});
