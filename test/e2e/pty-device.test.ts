// End to end over a real serial stack: `henrytick sim-device` serves the firmware in the
// simulated tester on a pseudo-terminal, and `henrytick measure --port` / `profile --port` reach
// it through @serialport/bindings-cpp, termios and the kernel's tty layer, as with hardware.
// Two checks on each reading: against the scenario's part (its true inductance within 0.5 % and
// within the stated uncertainty, as in measure-cli.test.ts), and against the in-process
// simulated tester with the same scenario and seed. The simulated tester is deterministic, so
// over the pseudo-terminal the result must be the very same; only the link's name differs.

import { spawnSync } from "node:child_process";
import { existsSync, statSync } from "node:fs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { SimDevices, type RunningDevice } from "./sim-device-process.ts";
import { measurePart, openTester } from "../../host/src/index.ts";
import { PtyDevice } from "../../host/src/sim/pty-device.ts";
import { loadScenario } from "../../host/src/sim/scenario.ts";
import { CLI, runCli } from "./run-cli.ts";

const hasSocat = spawnSync("socat", ["-V"], { stdio: "ignore" }).status === 0;
const SKIP_REASON = "skipped: Debian package socat not installed";


const simDevices = new SimDevices();


/** The reading must hit the part, and equal the in-process tester's reading of the same scenario. */
function expectGoodReading(scenario: string, stdout: string): void {
  const result = JSON.parse(stdout);
  const part = loadScenario(scenario).part;
  expect(Math.abs(result.inductance_h / part.inductance_h - 1)).toBeLessThan(0.005);
  expect(Math.abs(result.inductance_h - part.inductance_h)).toBeLessThan(result.inductance_u_h);
  const inProcess = runCli(["measure", "--sim", scenario, "--json"]);
  expect(inProcess.status).toBe(0);
  expect(withoutLink(result)).toEqual(withoutLink(JSON.parse(inProcess.stdout)));
}

/** A result without the fields that name the link or the scenario rather than the part. */
function withoutLink(result: Record<string, unknown>): Record<string, unknown> {
  const { label: _label, device, ...rest } = result;
  const { transport: _transport, ...otherDevice } = device as Record<string, unknown>;
  return { ...rest, device: otherDevice };
}

describe("henrytick sim-device without a pseudo-terminal", () => {
  it("reports the missing socat with its Debian package name and prints no path", () => {
    if (!hasSocat) console.warn(`pty-device.test.ts: pseudo-terminal tests ${SKIP_REASON} (apt-get install socat)`);
    const r = spawnSync(process.execPath, [CLI, "sim-device"], { encoding: "utf8", env: { ...process.env, PATH: "/henrytick-no-such-dir" }, timeout: 30_000 });
    expect(r.status).toBe(1);
    expect(r.stdout).toBe("");
    expect(r.stderr).toMatch(/\[SOCAT_MISSING\]/);
    expect(r.stderr).toMatch(/Debian package socat/);
  });

  it.each([
    [["sim-device", "drawer-choke-330u", "extra"], /unexpected argument "extra"/],
    [["sim-device", "--seed", "1.5"], /--seed must be an integer/],
    [["sim-device", "--port", "/dev/null"], /unknown option --port/],
  ])("refuses %j with exit status 2", (args, message) => {
    const r = runCli(args);
    expect(r.status).toBe(2);
    expect(r.stdout).toBe("");
    expect(r.stderr).toMatch(message);
  });
});

describe.skipIf(!hasSocat)(`henrytick sim-device over a pseudo-terminal${hasSocat ? "" : ` (${SKIP_REASON})`}`, () => {
  const scenarios = ["drawer-choke-330u", "loop-antenna-1u2", "solenoid-valve-82m"];
  const devices = new Map<string, RunningDevice>();

  beforeAll(async () => {
    for (const s of scenarios) devices.set(s, await simDevices.start([s]));
  });

  afterAll(async () => {
    await simDevices.stopAll();
  });

  it("prints exactly one line on stdout: a character device to open", () => {
    const d = devices.get("drawer-choke-330u")!;
    expect(d.stdout()).toBe(`${d.path}\n`);
    expect(statSync(d.path).isCharacterDevice()).toBe(true);
    expect(d.stderr()).toMatch(/henrytick measure --port /);
  });

  it.each(scenarios)("measure --port reads %s within 0.5 %% of its inductance", (s) => {
    const r = runCli(["measure", "--port", devices.get(s)!.path, "--json"]);
    expect(r.stderr).toBe("");
    expect(r.status).toBe(0);
    expectGoodReading(s, r.stdout);
  });

  // A scenario's bench conditions belong to the simulated tester it describes: the leads' 30 nH
  // move this part's reading by about 2.5 %, on the pseudo-terminal exactly as in process.
  it("serves a scenario's fixture as measure --sim does (loop-antenna-on-leads: 30 nH of leads)", async () => {
    const d = await simDevices.start(["loop-antenna-on-leads"]);
    const r = runCli(["measure", "--port", d.path, "--json"]);
    expect(r.status).toBe(0);
    const inProcess = runCli(["measure", "--sim", "loop-antenna-on-leads", "--json"]);
    expect(inProcess.status).toBe(0);
    expect(withoutLink(JSON.parse(r.stdout))).toEqual(withoutLink(JSON.parse(inProcess.stdout)));
  });

  it("serves one host after another on the same pseudo-terminal", () => {
    const path = devices.get("drawer-choke-330u")!.path;
    for (let i = 0; i < 2; i++) {
      const r = runCli(["measure", "--port", path, "--json"]);
      expect(r.status).toBe(0);
      const part = loadScenario("drawer-choke-330u").part;
      expect(Math.abs(JSON.parse(r.stdout).inductance_h / part.inductance_h - 1)).toBeLessThan(0.005);
    }
  });

  it("profile --port shows the same tester as profile --sim", () => {
    const r = runCli(["profile", "--port", devices.get("loop-antenna-1u2")!.path, "--json"]);
    expect(r.status).toBe(0);
    const sim = runCli(["profile", "--sim", "--json"]);
    expect(JSON.parse(r.stdout)).toEqual(JSON.parse(sim.stdout));
    expect(JSON.parse(r.stdout).identity.protocol_version).toBe(1);
  });

  it("stops on SIGINT with status 0 and removes its pseudo-terminal", async () => {
    const d = await simDevices.start(["filter-coil-4m7", "--seed", "5"]);
    expect(existsSync(d.path)).toBe(true);
    d.child.kill("SIGINT");
    expect(await d.exited).toBe(0);
    expect(d.stderr()).toMatch(/stopped \(SIGINT\)/);
    expect(existsSync(d.path)).toBe(false);
  });

  it("works as a library piece: PtyDevice in process, openTester on its path", async () => {
    const s = loadScenario("filter-coil-4m7");
    const device = await PtyDevice.start({ part: s.part, seed: s.seed });
    try {
      const t = await openTester({ port: device.path });
      try {
        expect(t.client.transport.description).toBe(`serial ${device.path}`);
        const r = await measurePart(t.client);
        expect(Math.abs(r.analysis.inductance_h / s.part.inductance_h - 1)).toBeLessThan(0.005);
      } finally {
        await t.close();
      }
      expect(device.stats.bytes_to_host).toBeGreaterThan(500); // profile, probe and reading streams
    } finally {
      await device.close();
    }
    expect(await device.stopped).toBeNull();
    expect(existsSync(device.path)).toBe(false);
  });
});
