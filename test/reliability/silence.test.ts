// A tester that never answers, one that stops answering, and a port another program holds: each
// gets its own code and advice. "Check that the port is a henrytick tester" fits only a port on
// which no tester ever spoke; a tester that was talking and went quiet (reset, power, cable, a
// hung firmware) gets DEVICE_SILENT; a port locked by another program gets PORT_IN_USE.

import { spawnSync } from "node:child_process";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { DeviceClient } from "../../host/src/device/client.ts";
import { DeviceTimeoutError } from "../../host/src/device/errors.ts";
import { referenceBoard } from "../../host/src/sim/board-model.ts";
import { SimTester } from "../../host/src/sim/sim-tester.ts";
import { SerialTransport } from "../../host/src/transport/serial-transport.ts";
import type { Transport, TransportError } from "../../host/src/transport/transport.ts";
import { SimDevices, type RunningDevice } from "../e2e/sim-device-process.ts";
import { caught, FAST_CLIENT, QUICK_PART, quickCoilScenarioFile, ResettableSimLink, SETTING } from "./sim-rig.ts";

/** A link to a simulated tester that delivers `lines` received lines and then nothing, ever (the tester died). */
class DyingLink implements Transport {
  private delivered = 0;
  private handler: (line: string) => void = () => {};
  readonly inner: ResettableSimLink;
  constructor(private readonly lines: number) {
    this.inner = new ResettableSimLink(() => new SimTester({ part: QUICK_PART, seed: 51, board: referenceBoard() }));
    this.inner.onLine((l) => {
      if (this.delivered++ < this.lines) this.handler(l);
    });
  }
  get description(): string {
    return "simulated tester that dies";
  }
  onLine(h: (line: string) => void): void {
    this.handler = h;
  }
  onClose(h: (err: TransportError | null) => void): void {
    this.inner.onClose(h);
  }
  write(data: Uint8Array): Promise<void> {
    return this.delivered >= this.lines ? Promise.resolve() : this.inner.write(data);
  }
  close(): Promise<void> {
    return this.inner.close();
  }
}

/** Lines a connect takes: ID and OK, then the profile frames and OK. */
async function connectLines(): Promise<number> {
  let n = 0;
  const link = new ResettableSimLink(() => new SimTester({ part: QUICK_PART, seed: 51, board: referenceBoard() }));
  const counting: Transport = {
    description: link.description,
    onLine: (h) => link.onLine((l) => (n++, h(l))),
    onClose: (h) => link.onClose(h),
    write: (d) => link.write(d),
    close: () => link.close(),
  };
  const client = await DeviceClient.connect(counting, FAST_CLIENT);
  await client.close();
  return n;
}

describe("silence on the link", () => {
  it("a port on which nothing ever answers: DEVICE_TIMEOUT, check that it is a henrytick tester", async () => {
    const e = await caught(() => DeviceClient.connect(new DyingLink(0), FAST_CLIENT));
    expect(e).toBeInstanceOf(DeviceTimeoutError);
    expect(e).toMatchObject({ code: "DEVICE_TIMEOUT", silence: "never" });
    expect((e as Error).message).toMatch(/is a henrytick tester/);
  });

  it("a tester that dies in the middle of a capture stream: DEVICE_SILENT, mid-reply, advice about reset, power and cable", async () => {
    const atConnect = await connectLines();
    const link = new DyingLink(atConnect + 3); // OK MS, the header and one data line, then nothing
    const client = await DeviceClient.connect(link, FAST_CLIENT);
    const e = await caught(() => client.measure(SETTING));
    expect(e).toMatchObject({ code: "DEVICE_SILENT", silence: "mid-reply" });
    expect((e as Error).message).toMatch(/stopped answering in the middle/);
    expect((e as Error).message).toMatch(/reset, lost power or been unplugged/);
    expect((e as Error).message).not.toMatch(/is a henrytick tester/);
    await client.close();
  });

  it("a tester that answered the connect and then nothing: DEVICE_SILENT, stopped", async () => {
    const link = new DyingLink(await connectLines());
    const client = await DeviceClient.connect(link, FAST_CLIENT);
    const e = await caught(() => client.counters());
    expect(e).toMatchObject({ code: "DEVICE_SILENT", silence: "stopped" });
    expect((e as Error).message).toMatch(/answered earlier/);
    await client.close();
  });
});

const hasSocat = spawnSync("socat", ["-V"], { stdio: "ignore" }).status === 0;
const SKIP_REASON = "skipped: Debian package socat not installed";
if (!hasSocat) console.warn(`silence.test.ts: pseudo-terminal tests ${SKIP_REASON} (apt-get install socat)`);

describe.skipIf(!hasSocat)(`on the serial path: sim-device behind a pseudo-terminal${hasSocat ? "" : ` (${SKIP_REASON})`}`, () => {
  const devices = new SimDevices();
  let device: RunningDevice;
  /** The quick low-Q coil of the in-process rig, as a scenario file for sim-device. */
  const scenario = quickCoilScenarioFile("henrytick-silence-");

  beforeAll(async () => {
    device = await devices.start([scenario]);
  }, 30_000);
  afterAll(async () => {
    device.child.kill("SIGCONT");
    await devices.stopAll();
  });

  it("a port another program holds: PORT_IN_USE, naming another program and how to find it", async () => {
    const first = await SerialTransport.open({ path: device.path });
    try {
      const e = await caught(() => SerialTransport.open({ path: device.path }));
      expect(e).toMatchObject({ code: "PORT_IN_USE" });
      expect((e as Error).message).toMatch(/in use by another program/);
      expect((e as Error).message).toMatch(/lsof/);
    } finally {
      await first.close();
    }
  });

  it("a tester whose process hangs after the connect (SIGSTOP): DEVICE_SILENT, not 'is it a tester'", async () => {
    const serial = await SerialTransport.open({ path: device.path });
    try {
      const client = await DeviceClient.connect(serial, { reply_timeout_ms: 500 });
      device.child.kill("SIGSTOP");
      const e = await caught(() => client.measure(SETTING));
      device.child.kill("SIGCONT");
      expect(e).toMatchObject({ code: "DEVICE_SILENT" });
      expect((e as Error).message).not.toMatch(/is a henrytick tester/);
    } finally {
      device.child.kill("SIGCONT");
      await serial.close();
    }
  });
});
