// Stray bytes on the port: another program (a modem manager probing a new USB serial port with AT
// commands, a terminal) writes into it before or between the host's commands. On connect the
// client resynchronises (newline, drain until quiet, ID again) and connects; between commands the
// tester's refusal names the likely cause instead of a host update; bytes that never stop give
// LINK_NOISE with that advice. In process through FaultTransport, and over the pseudo-terminal
// with the bytes written into it by another file handle, as a probing program would.

import { spawnSync } from "node:child_process";
import { writeFileSync } from "node:fs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { DeviceClient } from "../../host/src/device/client.ts";
import { referenceBoard } from "../../host/src/sim/board-model.ts";
import { Random } from "../../host/src/sim/random.ts";
import { SimTester } from "../../host/src/sim/sim-tester.ts";
import { SerialTransport } from "../../host/src/transport/serial-transport.ts";
import type { Transport } from "../../host/src/transport/transport.ts";
import { SimDevices, type RunningDevice } from "../e2e/sim-device-process.ts";
import { caught, FAST_CLIENT, matchesTruth, openRig, QUICK_PART, quickCoilScenarioFile, ResettableSimLink, settle, SETTING } from "./sim-rig.ts";

/** What a modem manager sends to probe a port (the issue's reproduction). */
const MODEM_PROBE = "AT\rATZ\r";

/** `n` random bytes from a seed (any value 0-255, newlines included). */
function randomBytes(seed: number, n: number): string {
  const rng = new Random(seed);
  let s = "";
  for (let i = 0; i < n; i++) s += String.fromCharCode(rng.nextU32() & 0xff);
  return s;
}

function expectStrayAdvice(e: unknown): void {
  const m = (e as Error).message;
  expect(m).toMatch(/another program/);
  expect(m).toMatch(/modem manager/);
  expect(m).not.toMatch(/update the host/);
}

describe("stray bytes before connect: the client resynchronises and measures", () => {
  const cases: [string, string][] = [
    ["a modem manager's AT probe (AT\\rATZ\\r)", MODEM_PROBE],
    ["300 random bytes (seed 1)", randomBytes(1, 300)],
    ["300 random bytes (seed 2)", randomBytes(2, 300)],
    ["300 random bytes (seed 3)", randomBytes(3, 300)],
  ];
  for (const [name, stray] of cases) {
    it(name, async () => {
      const rig = await openRig({ seed: 41, faults: { stray_to_tester: stray } });
      try {
        expect(rig.faults.injected.stray_to_tester).toBe(1);
        const raw = await rig.client.measure(SETTING);
        await settle();
        expect(matchesTruth(raw, rig.link.sim)).toBe(true);
        expect(rig.pulses()).toBe(1);
      } finally {
        await rig.close();
      }
    });
  }
});

describe("stray bytes between commands", () => {
  it("the refused command's error names another program on the port, no pulse; the next reading is whole", async () => {
    const rig = await openRig({ seed: 42 });
    try {
      await rig.faults.sendStray(MODEM_PROBE);
      const e = await caught(() => rig.client.measure(SETTING));
      // The probe glued to the front of MS: the line's CRC no longer matches.
      expect(e).toMatchObject({ code: "LINK_CRC" });
      expectStrayAdvice(e);
      expect(rig.pulses()).toBe(0);
      const raw = await rig.client.measure(SETTING);
      await settle();
      expect(matchesTruth(raw, rig.link.sim)).toBe(true);
    } finally {
      await rig.close();
    }
  });

  it("a stray line of its own: the tester refuses it (ER 2 ?) and then runs MS: the client takes that pulse's capture", async () => {
    const rig = await openRig({ seed: 44 });
    try {
      await rig.faults.sendStray(MODEM_PROBE + "\n");
      const raw = await rig.client.measure(SETTING);
      await settle();
      expect(matchesTruth(raw, rig.link.sim)).toBe(true);
      expect(rig.pulses()).toBe(1);
    } finally {
      await rig.close();
    }
  });

  it("an over-long stray line: LINE_TOO_LONG with the same advice", async () => {
    const rig = await openRig({ seed: 43 });
    try {
      await rig.faults.sendStray("X".repeat(300));
      const e = await caught(() => rig.client.measure(SETTING));
      expect(e).toMatchObject({ code: "LINE_TOO_LONG" });
      expectStrayAdvice(e);
    } finally {
      await rig.close();
    }
  });
});

/** A link on which another program writes a probe before every write of the host. */
class ProbedLink implements Transport {
  constructor(private readonly inner: ResettableSimLink) {}
  get description(): string {
    return this.inner.description;
  }
  onLine(h: (line: string) => void): void {
    this.inner.onLine(h);
  }
  onClose(h: (err: import("../../host/src/transport/transport.ts").TransportError | null) => void): void {
    this.inner.onClose(h);
  }
  async write(data: Uint8Array): Promise<void> {
    await this.inner.write(new TextEncoder().encode(MODEM_PROBE));
    await this.inner.write(data);
  }
  close(): Promise<void> {
    return this.inner.close();
  }
}

describe("stray bytes that do not stop", () => {
  it("connect gives up with LINK_NOISE, naming another program writing to the port", async () => {
    const link = new ResettableSimLink(() => new SimTester({ part: QUICK_PART, seed: 44, board: referenceBoard() }));
    const e = await caught(() => DeviceClient.connect(new ProbedLink(link), FAST_CLIENT));
    expect(e).toMatchObject({ code: "LINK_NOISE" });
    expectStrayAdvice(e);
    await link.close();
  });
});

const hasSocat = spawnSync("socat", ["-V"], { stdio: "ignore" }).status === 0;
const SKIP_REASON = "skipped: Debian package socat not installed";
if (!hasSocat) console.warn(`stray-bytes.test.ts: pseudo-terminal tests ${SKIP_REASON} (apt-get install socat)`);

describe.skipIf(!hasSocat)(`stray bytes written into the pseudo-terminal by another program${hasSocat ? "" : ` (${SKIP_REASON})`}`, () => {
  const devices = new SimDevices();
  let device: RunningDevice;
  /** The quick low-Q coil of the in-process rig, as a scenario file for sim-device. */
  const scenario = quickCoilScenarioFile("henrytick-stray-");

  beforeAll(async () => {
    device = await devices.start([scenario]);
  }, 30_000);
  afterAll(async () => {
    await devices.stopAll();
  });

  for (const [name, stray] of [["AT\\rATZ\\r", MODEM_PROBE], ["300 random bytes", randomBytes(7, 300)]] as const) {
    it(`${name} written into the port before the host opens it: connects and measures`, async () => {
      writeFileSync(device.path, Buffer.from(stray, "latin1")); // as `printf ... > PTY` does
      const serial = await SerialTransport.open({ path: device.path });
      try {
        const client = await DeviceClient.connect(serial, { reply_timeout_ms: 500 });
        const raw = await client.measure(SETTING);
        expect(raw.end_reason).toBe("quiet");
        expect(raw.ticks.length).toBeGreaterThan(20);
      } finally {
        await serial.close();
      }
    });
  }
});
