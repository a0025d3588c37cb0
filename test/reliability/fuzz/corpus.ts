// Seed inputs for the fuzz targets, all produced by the real code: command frames from the host's
// encoder, reply lines and capture streams from the firmware in the simulated tester, capture
// files from the capture writer, the shipped scenarios, and a calibration profile that passes
// validation. Mutations start from these, so they reach deep into each parser.

import { readFileSync } from "node:fs";
import { join } from "node:path";
import { serializeCapture } from "../../../host/src/capture/capture-file.ts";
import type { CalibrationProfile } from "../../../host/src/calibration/profile-schema.ts";
import { decodeLine, encodeCommand } from "../../../host/src/device/frames.ts";
import { parseIdentity, parseProfile } from "../../../host/src/device/profile.ts";
import { CaptureStreamReader } from "../../../host/src/device/stream-reader.ts";
import type { RawCapture } from "../../../host/src/device/stream-reader.ts";
import { captureFromDevice } from "../../../host/src/measure/capture-build.ts";
import { listScenarios, scenarioDir } from "../../../host/src/sim/scenario.ts";
import { SimTester } from "../../../host/src/sim/sim-tester.ts";
import { QUICK_PART, SETTING } from "../sim-rig.ts";

export interface Corpus {
  commands: string[];
  replies: string[];
  /** Capture streams (CH, CD..., CE lines), with the settings that requested them. */
  streams: { settings: typeof SETTING; lines: string[] }[];
  profileLines: string[];
  captureFiles: string[];
  scenarios: string[];
  calibration: CalibrationProfile;
}

const text = (b: Uint8Array) => new TextDecoder("latin1").decode(b);

/** Runs commands on a fresh simulated tester; returns each command's reply lines. */
function exchange(part: typeof QUICK_PART | null, commands: [string, number[]][]): string[][] {
  const sim = new SimTester({ part, seed: 99 });
  let out = "";
  sim.onOutput((b) => (out += text(b)));
  return commands.map(([tag, args]) => {
    out = "";
    sim.advance(2);
    sim.input(encodeCommand(tag, args));
    return out.split("\n").filter((l) => l.length > 0);
  });
}

const settingArgs = (s: typeof SETTING) => [s.drive, s.tank, s.charge_us, s.edge_limit, s.timeout_ms, s.quiet_us];

let cached: Corpus | null = null;

export function corpus(): Corpus {
  if (cached) return cached;
  const full = { ...SETTING, edge_limit: 12 };
  const [id, pf, ms, cn, st, msFull] = exchange(QUICK_PART, [
    ["ID", []], ["PF", []], ["MS", settingArgs(SETTING)], ["CN", []], ["ST", []], ["MS", settingArgs(full)],
  ]);
  const [msOpen] = exchange(null, [["MS", settingArgs(SETTING)]]);
  const streams = [
    { settings: SETTING, lines: ms.slice(1) },
    { settings: full, lines: msFull.slice(1) },
    { settings: SETTING, lines: msOpen.slice(1) },
  ];
  const frames = (lines: string[]) => lines.map((l) => decodeLine(l)).flatMap((d) => (d.ok ? [d.frame] : []));
  const identity = parseIdentity(frames(id)[0]);
  const profile = parseProfile(frames(pf));
  const captureFiles = streams.slice(0, 2).map((s) => {
    const reader = new CaptureStreamReader(s.settings);
    let raw: RawCapture | null = null;
    for (const f of frames(s.lines)) raw = reader.accept(f) ?? raw;
    return serializeCapture(captureFromDevice(raw!, identity, profile, "fuzz corpus", "corpus"));
  });
  const commands = [
    // Short capture windows: with open terminals the firmware polls through the whole window.
    ["ID", []], ["PF", []], ["AB", []], ["CR", []], ["ST", []], ["CN", []], ["TK", []], ["MS", settingArgs(SETTING)], ["MS", [0, 3, 100, 8192, 200, 50]],
    ["MS", [3, 0, 1, 1, 1, 1]], ["ZZ", [1, 2, 3]],
  ].map(([t, a]) => text(encodeCommand(t as string, a as number[])).trimEnd());
  const now = "2026-01-01T00:00:00.000Z";
  const calibration: CalibrationProfile = {
    format: "henrytick-calibration", version: 1, device_id: identity.device_id, updated: now,
    tanks: [{ index: 1, nominal_f: 10e-9, c_f: 10.02e-9, u_f: 0.01e-9, shared_u_rel: 0.0005, timebase_ppm: 0, drive: 2, method: "reference-inductor", time: now, detail: "fuzz corpus" }],
    thresholds: { ratio: -0.14, u_ratio: 0.01, thresholds_v: [0.035, -0.005], method: "threshold-fit", time: now, detail: "fuzz corpus" },
    timebase: { ppm: 11, u_ppm: 2, method: "host-clock", time: now, detail: "fuzz corpus" },
  };
  cached = {
    commands,
    replies: [...id, ...pf, ...ms, ...cn, ...st, ...msFull, ...msOpen],
    streams,
    profileLines: pf,
    captureFiles,
    scenarios: listScenarios().map((n) => readFileSync(join(scenarioDir(), `${n}.json`), "utf8")),
    calibration,
  };
  return cached;
}
