// Firmware behaviour through its wire protocol, on every board file: each board's image (the
// release wasm for the reference board) in the simulated tester of that board, the expectations
// taken from the board's own values. The scripted-port cases run the release wasm.

import { beforeAll, describe, expect, it } from "vitest";
import { ERR_ABORTED, ERR_ARGUMENT, ERR_BUSY, ERR_CHARGE_LIMIT, ERR_CRC, ERR_LINE_TOO_LONG, ERR_REST, ERR_RINGING, ERR_SYNTAX, ERR_UNKNOWN_COMMAND, PROTOCOL_VERSION, crc16Range } from "../../shared-protocol/src/index.ts";
import { encodeCommand } from "../../host/src/device/frames.ts";
import { boardNames } from "../tools/board-source.ts";
import { type BoardUnderTest, boardUnderTest } from "./board-images.ts";
import { ScriptedPort } from "./scripted-port.ts";
import { show } from "./sim-link.ts";

const text = (tag: string, ...args: number[]) => new TextDecoder().decode(encodeCommand(tag, args));
const strip = (lines: string[]) => lines.map((l) => l.replace(/\*[0-9A-F]{4}$/, ""));
const withCrc = (body: string) => {
  const b = new TextEncoder().encode(body);
  return `${body}*${crc16Range(b, 0, b.length).toString(16).toUpperCase().padStart(4, "0")}`;
};

describe.each(boardNames())("firmware commands on board %s", (name) => {
  let b: BoardUnderTest;
  let maxChargeUs0: number; // drive 0's charge-time interlock, from the profile
  let restMs0: number; // the rest owed after that longest pulse, from the profile
  beforeAll(async () => {
    b = await boardUnderTest(name);
    maxChargeUs0 = b.profile().drives[0].max_charge_us;
    restMs0 = b.profile().drives[0].rest_after_max_ms!;
  });
  const open = (opts: Parameters<BoardUnderTest["link"]>[0] = {}) => b.link(opts);
  const lastTank = () => b.file.tanks.length - 1;
  const lastDrive = () => b.file.drives.length - 1;
  const edges = () => b.file.buffer_edges;
  const deviceId = () => `HT-${b.board.device_id.toString(16).toUpperCase().padStart(8, "0")}`;

  it("identifies itself with product, version, protocol and device id", () => {
    expect(open().send("ID").map(show)).toEqual([`ID henrytick 0.2.0 ${PROTOCOL_VERSION} ${deviceId()}`, "OK ID"]);
  });

  it.each([
    ["an unknown command", text("ZZ"), `ER ${ERR_UNKNOWN_COMMAND} ?`],
    ["a CRC mismatch", "ID*0000\n", `ER ${ERR_CRC} ?`],
    ["a frame without CRC", "ID\n", `ER ${ERR_SYNTAX} ?`],
    ["binary garbage", "\u0001\u00ff\u0007*ABCD\n", `ER ${ERR_CRC} ?`],
    ["a control character under a valid CRC", withCrc("ID\u0007") + "\n", `ER ${ERR_SYNTAX} ?`],
    ["an over-long line", "X".repeat(300) + "\n", `ER ${ERR_LINE_TOO_LONG} ?`],
    ["MS with too few fields", text("MS", 1, 2), `ER ${ERR_ARGUMENT} MS`],
    ["MS with a drive index out of range", text("MS", 9, 0, 100, 100, 100, 1000), `ER ${ERR_ARGUMENT} MS`],
    ["MS with a zero edge limit", text("MS", 0, 0, 100, 0, 100, 1000), `ER ${ERR_ARGUMENT} MS`],
    ["MS with a timeout over the limit", text("MS", 0, 0, 100, 100, 999999, 1000), `ER ${ERR_ARGUMENT} MS`],
    ["ID with arguments", text("ID", 1), `ER ${ERR_ARGUMENT} ID`],
    ["PF with arguments", text("PF", 1), `ER ${ERR_ARGUMENT} PF`],
    ["CR with arguments", text("CR", 1), `ER ${ERR_ARGUMENT} CR`],
    ["ST with arguments", text("ST", 1), `ER ${ERR_ARGUMENT} ST`],
    ["CN with arguments", text("CN", 1), `ER ${ERR_ARGUMENT} CN`],
    ["a lower-case command", text("id"), `ER ${ERR_UNKNOWN_COMMAND} ?`],
    ["MS with a non-numeric field", withCrc("MS 1 2 x 100 100 1000") + "\n", `ER ${ERR_ARGUMENT} MS`],
    ["MS with a negative charge time", text("MS", 1, 2, -5, 100, 100, 1000), `ER ${ERR_ARGUMENT} MS`],
    ["a frame with more than 16 fields", text("MS", ...Array.from({ length: 16 }, () => 1)), `ER ${ERR_ARGUMENT} ?`],
    ["a double space", withCrc("MS  1") + "\n", `ER ${ERR_SYNTAX} ?`],
  ])("answers %s with a numbered error frame", (_what, line, expected) => {
    const link = open();
    const replies = link.raw(line);
    expect(replies.map((l) => l.replace(/\*[0-9A-F]{4}$/, ""))).toEqual([expected]);
    expect(link.sim.stats.pulses).toBe(0);
  });

  it("refuses MS over the drive's charge-time interlock, and pulses at the limit itself", () => {
    const l = open({ part: null });
    expect(l.raw(text("MS", 0, 0, maxChargeUs0 + 1, 100, 100, 1000)).map((x) => x.replace(/\*[0-9A-F]{4}$/, ""))).toEqual([`ER ${ERR_CHARGE_LIMIT} MS`]);
    expect(show(l.send("MS", 0, 0, maxChargeUs0, 10, 1, 1000)[0])).toBe("OK MS");
    expect(l.sim.stats.pulses).toBe(1);
  });

  it("answers a line that lost a byte (port overrun) as corrupted, and reads the next one", () => {
    const link = open();
    link.raw("I");
    link.sim.fw.fw_rx_overrun();
    expect(strip(link.raw("D*A21B\n" + text("ID")))).toEqual([`ER ${ERR_CRC} ?`, `ID henrytick 0.2.0 ${PROTOCOL_VERSION} ${deviceId()}`, "OK ID"]);
  });

  it("ignores blank lines (a host resynchronises with a newline)", () => {
    const link = open();
    expect(link.raw("\n\n\r\n")).toHaveLength(1); // "\r" alone is a (malformed) line
    expect(link.raw("\n")).toEqual([]);
  });

  it("streams the edges the capture hardware recorded, verifiably", () => {
    const link = open();
    const frames = link.send("MS", 1, 2, 200, edges(), 1000, 2000);
    expect(show(frames[0])).toBe("OK MS");
    expect(show(frames[1])).toMatch(new RegExp(`^CH 0 1 ${b.file.tick_hz} 1 2 200 \\d+$`));
    const truth = link.sim.lastEdges!;
    const count = Number(frames[1].fields[6]);
    expect(count).toBe(truth.ticks.length);
    expect(count).toBeGreaterThan(100);
    const trailer = frames[frames.length - 1];
    expect(trailer.tag).toBe("CE");
    expect(Number(trailer.fields[1])).toBe(count);
    // Sequence numbers run 0..n without gaps.
    frames.slice(1).forEach((f, i) => expect(Number(f.fields[0])).toBe(i));
    expect(link.sim.stats.pulses).toBe(1);
  });

  it("resends the last capture unchanged on CR, without pulsing again", () => {
    const link = open();
    const first = link.send("MS", 1, 2, 200, edges(), 1000, 2000).slice(1);
    const again = link.send("CR");
    expect(show(again[0])).toBe("OK CR");
    expect(again.slice(1).map(show)).toEqual(first.map(show));
    expect(link.sim.stats.pulses).toBe(1);
  });

  it("refuses CR before any capture", () => {
    expect(open().send("CR").map(show)).toEqual([`ER ${ERR_ARGUMENT} CR`]);
  });

  it("enforces the rest between pulses and says how long remains", () => {
    // The longest pulse on the lowest resistor twice: the second must wait for it to cool (every
    // board here owes a rest after it: the profile's PR field 6).
    expect(restMs0).toBeGreaterThan(0);
    const link = open({ part: null });
    link.send("MS", 0, lastTank(), maxChargeUs0, 10, 1, 1000);
    const refused = link.send("MS", 0, lastTank(), maxChargeUs0, 10, 1, 1000);
    expect(refused).toHaveLength(1);
    expect(refused[0].tag).toBe("ER");
    expect(Number(refused[0].fields[0])).toBe(ERR_REST);
    const ms = Number(refused[0].fields[2]);
    expect(ms).toBeGreaterThan(0);
    expect(ms).toBeLessThanOrEqual(restMs0);
    link.sim.advance(ms / 1000);
    expect(show(link.send("MS", 0, lastTank(), maxChargeUs0, 10, 1, 1000)[0])).toBe("OK MS");
    expect(link.sim.stats.pulses).toBe(2);
  });

  it("refuses a second measurement while one is running", () => {
    const link = open();
    const replies = link.raw(text("MS", 1, 2, 200, edges(), 1000, 2000) + text("MS", 1, 2, 200, edges(), 1000, 2000));
    expect(replies.map((l) => l.replace(/\*[0-9A-F]{4}$/, "")).slice(0, 2)).toEqual(["OK MS", `ER ${ERR_BUSY} MS`]);
  });

  it("aborts a running measurement, opening the switch before any pulse completes", () => {
    const link = open();
    const replies = link.raw(text("MS", 1, 2, 200, edges(), 1000, 2000) + text("AB"));
    expect(replies.map((l) => l.replace(/\*[0-9A-F]{4}$/, ""))).toEqual(["OK MS", `ER ${ERR_ABORTED} MS`, "OK AB"]);
    expect(link.sim.stats.pulses).toBe(0);
  });

  it("never refuses an abort, even when idle", () => {
    expect(open().send("AB").map(show)).toEqual(["OK AB"]);
  });

  it("self-test: a quiet capture path reports no stray edges and pulses nothing", () => {
    const link = open();
    expect(link.send("ST").map(show)).toEqual([`SR ${b.file.self_test_us} 0`, "OK ST"]);
    expect(link.sim.stats.pulses).toBe(0);
  });

  it("self-test: a ring still going is heard as stray edges and counted as a fault", () => {
    const link = open();
    link.send("MS", 1, 2, 200, 20, 1000, 2000); // stopped at 20 edges, the ring goes on
    const st = link.send("ST");
    expect(show(st[1])).toBe("OK ST");
    expect(Number(st[0].fields[1])).toBeGreaterThan(0);
    expect(show(link.send("CN")[0])).toBe("CT 1 1 0 0");
  });

  it("self-test can be aborted, and refuses to start during a measurement", () => {
    const link = open();
    expect(strip(link.raw(text("ST") + text("AB")))).toEqual([`ER ${ERR_ABORTED} ST`, "OK AB"]);
    expect(strip(link.raw(text("MS", 1, 2, 200, edges(), 1000, 2000) + text("ST"))).slice(0, 2)).toEqual(["OK MS", `ER ${ERR_BUSY} ST`]);
  });

  it("counts measurements, faults, refused commands and lost bytes", () => {
    const link = open();
    expect(link.send("CN").map(show)).toEqual(["CT 0 0 0 0", "OK CN"]);
    link.send("MS", 0, lastTank(), maxChargeUs0, 10, 1, 1000);
    link.send("MS", 0, lastTank(), maxChargeUs0 + 1, 10, 1, 1000); // refused: charge limit
    link.raw(text("ZZ") + "garbage\n");
    link.sim.fw.fw_rx_overrun();
    link.raw("\n");
    expect(link.send("CN").map(show)).toEqual(["CT 1 0 4 1", "OK CN"]);
  });

  it("reports no edges with open terminals and ends the capture at its timeout", () => {
    const link = open({ part: null });
    const frames = link.send("MS", lastDrive(), lastTank(), 1000, edges(), 50, 2000);
    expect(frames.map(show).slice(1)).toEqual([`CH 0 1 ${b.file.tick_hz} ${lastDrive()} ${lastTank()} 1000 0`, "CE 1 0 FFFF 3"]);
  });

  it("TK reports the free-running timer, which advances at the crystal's real rate", () => {
    const link = open();
    const first = link.send("TK");
    expect(first.map(show)[1]).toBe("OK TK");
    const t0 = Number(first[0].fields[0]) >>> 0;
    link.sim.advance(0.01);
    const t1 = Number(link.send("TK")[0].fields[0]) >>> 0;
    // 10 ms at the board's tick rate with its simulated crystal's error (board file), to the tick.
    expect(Math.abs(t1 - t0 - 0.01 * b.board.timer.tick_hz * (1 + b.board.timer.ppm * 1e-6))).toBeLessThan(1);
  });

  it("refuses TK with arguments", () => {
    expect(open().send("TK", 1).map(show)).toEqual([`ER ${ERR_ARGUMENT} TK`]);
  });
});

describe("firmware commands on a scripted port (release image)", () => {
  it("self-test: after stray edges, pulses stay refused until the path has been quiet", () => {
    const port = new ScriptedPort();
    port.queueHeard([100, 900], [200, 1801]); // interference: two edges with the switch open
    port.rx(encodeCommand("ST"));
    expect(strip(port.text().trim().split("\n"))).toEqual(["SR 20000 2", "OK ST"]);
    port.output = [];
    port.rx(encodeCommand("MS", [1, 2, 200, 100, 100, 1000]));
    expect(strip(port.text().trim().split("\n"))).toEqual([`ER ${ERR_RINGING} MS 20`]);
    port.output = [];
    port.idle(20 * 64000);
    port.rx(encodeCommand("MS", [1, 2, 200, 100, 100, 1000]));
    expect(strip(port.text().trim().split("\n"))[0]).toBe("OK MS");
  });
});
