// Link faults on the real serial path. `henrytick sim-device` runs the firmware in the simulated
// tester as a separate process behind a socat pseudo-terminal; the host opens it with
// SerialTransport (node-serialport, termios, the kernel's tty layer) and FaultTransport damages
// the lines on the host side, as link-faults.test.ts does in process. The outcomes must be the
// ones docs/reliability.md states for the in-process path: the very capture recovered with CR and
// one pulse, or a coded error within a bounded time; the port vanishing is LINK_DISCONNECTED.
//
// Every wait is bounded by the client's reply timeout; vitest's per-test timeout is the bound on
// each test (no wall-clock assertions: the figures are in docs/reliability.md).
//
// Truth comes from the tester itself: its pulse counter (CN) says how many pulses fired, and the
// capture it still holds, fetched again over the clean link, is what a recovered capture must be.

import { spawnSync } from "node:child_process";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { SimDevices, type RunningDevice } from "../e2e/sim-device-process.ts";
import { DeviceClient } from "../../host/src/device/client.ts";
import { DeviceError } from "../../host/src/device/errors.ts";
import { ProtocolError } from "../../host/src/device/frames.ts";
import type { RawCapture } from "../../host/src/device/stream-reader.ts";
import { FaultTransport } from "../../host/src/transport/fault-transport.ts";
import type { FaultOptions } from "../../host/src/transport/fault-transport.ts";
import { SerialTransport } from "../../host/src/transport/serial-transport.ts";
import { TransportError } from "../../host/src/transport/transport.ts";
import { caught, QUICK_PART, quickCoilScenarioFile, SETTING } from "./sim-rig.ts";

const hasSocat = spawnSync("socat", ["-V"], { stdio: "ignore" }).status === 0;
const SKIP_REASON = "skipped: Debian package socat not installed";
if (!hasSocat) console.warn(`pty-faults.test.ts: serial-path fault tests ${SKIP_REASON} (apt-get install socat)`);

/**
 * Reply timeout over the pseudo-terminal: a lost line costs this much. Longer than in process
 * (300 ms): the tester is another process and computes each pulse while the host's clock runs.
 */
const REPLY_TIMEOUT_MS = 500;

/** Capture lines after the OK MS line: CH is line 1 of the reply, the first CD line 2. */
const OK_MS = 0;
const CH = 1;
const FIRST_CD = 2;


const simDevices = new SimDevices();
/** The quick low-Q coil of the in-process rig, as a scenario file for sim-device. */
const scenario = quickCoilScenarioFile("henrytick-pty-faults-");


interface SerialRig {
  faults: FaultTransport;
  client: DeviceClient;
  close(): Promise<void>;
}

/** The host side: SerialTransport on the pseudo-terminal, FaultTransport on it, the client on that. */
async function connect(path: string, faults: Omit<FaultOptions, "seed"> = {}, reply_timeout_ms = REPLY_TIMEOUT_MS): Promise<SerialRig> {
  const serial = await SerialTransport.open({ path });
  const ft = new FaultTransport(serial, { seed: 1, ...faults });
  try {
    const client = await DeviceClient.connect(ft, { reply_timeout_ms, resend_attempts: 2 });
    return { faults: ft, client, close: () => client.close() };
  } catch (e) {
    await ft.close();
    throw e;
  }
}

/** Pulses fired by the tester since it started (its CN counter). */
async function pulses(client: DeviceClient): Promise<number> {
  return (await client.counters()).measurements;
}

/**
 * One reading on a damaged link (`inject` arms the faults, counted from the MS reply on): the
 * tester's very capture comes back, and the part was pulsed once.
 */
async function recovers(rig: SerialRig, inject: (r: SerialRig) => void = () => {}): Promise<RawCapture> {
  const before = await pulses(rig.client);
  inject(rig);
  const raw = await rig.client.measure(SETTING);
  expect(await pulses(rig.client)).toBe(before + 1);
  expect(raw.end_reason).toBe("quiet");
  const held = await rig.client.recall(SETTING); // the tester's copy, sent again without a pulse
  expect(raw.ticks).toEqual(held.ticks);
  expect(raw.levels).toEqual(held.levels);
  expect(raw.ticks.length).toBeGreaterThan(20);
  return raw;
}

describe.skipIf(!hasSocat)(`link faults on the serial path: sim-device process, pseudo-terminal, SerialTransport${hasSocat ? "" : ` (${SKIP_REASON})`}`, () => {
  let device: RunningDevice;

  beforeAll(async () => {
    device = await simDevices.start([scenario]);
  }, 30_000);

  afterAll(async () => {
    await simDevices.stopAll();
  });

  const recovered: [string, Omit<FaultOptions, "seed">, (r: SerialRig) => void][] = [
    ["a flipped bit in a data line", {}, (r) => r.faults.arm("flip_bit", FIRST_CD)],
    ["a flipped bit in the header", {}, (r) => r.faults.arm("flip_bit", CH)],
    ["a lost byte in a data line", {}, (r) => r.faults.arm("drop_byte", FIRST_CD)],
    ["a lost newline (two lines merged)", {}, (r) => r.faults.arm("drop_byte", FIRST_CD, -1)],
    ["a duplicated data line", {}, (r) => r.faults.arm("duplicate_line", FIRST_CD)],
    ["two data lines swapped", {}, (r) => r.faults.arm("reorder_lines", CH)],
    // Held back twice the reply timeout: the client gives up on the stream, drains the late
    // lines (they carry the old request token) and fetches the capture again.
    ["a stall longer than the reply timeout", { stall_ms: 2 * REPLY_TIMEOUT_MS }, (r) => r.faults.arm("stall", FIRST_CD)],
    ["the rest of the burst lost for good", { stall_ms: Infinity }, (r) => r.faults.arm("stall", FIRST_CD)],
  ];
  it.each(recovered)("%s: the same capture is fetched again with CR, one pulse", async (_name, opts, inject) => {
    const rig = await connect(device.path, opts);
    try {
      await recovers(rig, inject);
      expect(rig.faults.sent.CR ?? 0).toBeGreaterThanOrEqual(2); // the recovery's, and the truth's own fetch
      expect(Object.values(rig.faults.injected).reduce((a, b) => a + b, 0)).toBeGreaterThanOrEqual(1);
    } finally {
      await rig.close();
    }
  });

  it("a stall shorter than the reply timeout only delays the same capture (no CR)", async () => {
    const rig = await connect(device.path, { stall_ms: 50 });
    try {
      await recovers(rig, (r) => r.faults.arm("stall", FIRST_CD));
      expect(rig.faults.sent.CR ?? 0).toBe(1); // only the truth's own fetch
    } finally {
      await rig.close();
    }
  });

  it("a capture damaged on every attempt ends in CAPTURE_DAMAGED after two resends, one pulse", async () => {
    const rig = await connect(device.path, { rates: { flip_bit: 1 }, only_tags: ["CD"] });
    try {
      const before = await pulses(rig.client);
      const e = await caught(() => rig.client.measure(SETTING));
      expect(e).toBeInstanceOf(ProtocolError);
      expect((e as ProtocolError).code).toBe("CAPTURE_DAMAGED");
      expect(rig.faults.sent.CR).toBe(2);
      expect(await pulses(rig.client)).toBe(before + 1);
    } finally {
      await rig.close();
    }
  });

  it("a corrupted OK MS fails with LINK_CORRUPT after the one pulse; the next reading is whole", async () => {
    const rig = await connect(device.path);
    try {
      const before = await pulses(rig.client);
      rig.faults.arm("flip_bit", OK_MS, 1);
      const e = await caught(() => rig.client.measure(SETTING));
      expect((e as ProtocolError).code).toBe("LINK_CORRUPT");
      expect(await pulses(rig.client)).toBe(before + 1);
      await recovers(rig);
    } finally {
      await rig.close();
    }
  });

  it("a command damaged on its way to the tester is refused (LINK_CRC) without a pulse", async () => {
    for (const kind of ["tx_flip_bit", "tx_drop_byte"] as const) {
      const rig = await connect(device.path);
      try {
        const before = await pulses(rig.client);
        rig.faults.arm(kind, 0, 3);
        const e = await caught(() => rig.client.measure(SETTING));
        expect(e).toBeInstanceOf(DeviceError);
        expect((e as DeviceError).code).toBe("LINK_CRC");
        expect(await pulses(rig.client)).toBe(before);
      } finally {
        await rig.close();
      }
    }
  });

  it("garbage at connect (whole lines and an unterminated fragment) is discarded: the client connects and measures", async () => {
    const rig = await connect(device.path, { garbage_at_connect: "\x00\xff boot 1.0\r\nOK ZZ\n#partial-line-without-end" });
    try {
      expect(rig.faults.injected.garbage_at_connect).toBe(1);
      await recovers(rig);
    } finally {
      await rig.close();
    }
  });

  it("the port vanishing mid-capture (sim-device killed): LINK_DISCONNECTED, and on every later call", async () => {
    const own = await simDevices.start([scenario]);
    // The tester's reply is held on the host side (a 1.5 s stall, inside a 3 s reply timeout)
    // while the process is killed as the reply arrives: the pulse has fired and its capture is in
    // flight when the port goes. socat lets its pseudo-terminal go about 0.5 s after its input ends.
    const rig = await connect(own.path, { stall_ms: 1500 }, 3000);
    try {
      const start = rig.faults.linesReceived;
      rig.faults.arm("stall", OK_MS);
      const p = rig.client.measure(SETTING);
      const watch = setInterval(() => {
        if (rig.faults.linesReceived > start && own.child.exitCode === null) own.child.kill("SIGKILL");
      }, 1);
      const e = await caught(() => p);
      clearInterval(watch);
      // A TransportError, not DEVICE_TIMEOUT: the close is seen, not waited out; nothing partial returned.
      expect(e).toBeInstanceOf(TransportError);
      expect((e as TransportError).code).toBe("LINK_DISCONNECTED");
      expect((e as TransportError).disconnected).toBe(true);
      const e2 = await caught(() => rig.client.measure(SETTING));
      expect(e2).toBeInstanceOf(TransportError);
      expect((e2 as TransportError).code).toBe("LINK_DISCONNECTED");
      expect(await own.exited).toBeNull(); // ended by the signal
    } finally {
      await rig.close();
    }
  });

  it("a port that is gone (sim-device stopped, its pseudo-terminal removed): opening fails with LINK_ERROR naming the path", async () => {
    const own = await simDevices.start([scenario]);
    own.child.kill("SIGTERM");
    await own.exited;
    const e = await caught(() => connect(own.path));
    expect(e).toBeInstanceOf(TransportError);
    expect((e as TransportError).code).toBe("LINK_ERROR");
    expect((e as Error).message).toContain(`cannot open ${own.path}`);
  });
});
