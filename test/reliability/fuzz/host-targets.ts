// Fuzz targets on the host side: the frame decoder, the capture stream reader (fed the way the
// device client feeds it), the capture file reader (and the analysis behind it), the device
// profile parser, the calibration profile validator and the scenario validator. Each target
// knows the error class its module documents; anything else thrown is a crash.

import { CaptureFileError, parseCapture } from "../../../host/src/capture/capture-file.ts";
import { CalibrationError } from "../../../host/src/calibration/errors.ts";
import { validateProfile } from "../../../host/src/calibration/profile-schema.ts";
import { DeviceError } from "../../../host/src/device/errors.ts";
import { decodeLine, ProtocolError } from "../../../host/src/device/frames.ts";
import type { Frame } from "../../../host/src/device/frames.ts";
import { parseProfile } from "../../../host/src/device/profile.ts";
import { CaptureStreamReader, StreamDefect } from "../../../host/src/device/stream-reader.ts";
import type { RawCapture } from "../../../host/src/device/stream-reader.ts";
import { analyzeCapture, MeasureError } from "../../../host/src/measure/read-once.ts";
import { ScenarioError, validateScenario } from "../../../host/src/sim/scenario.ts";
import { corpus } from "./corpus.ts";
import { body, Mutator, seal } from "./mutate.ts";
import type { Tally } from "./tally.ts";
import { classify, crash, rejected } from "./tally.ts";

/** A line mutated at random; half the time re-sealed so it passes the CRC. */
function mutatedLine(m: Mutator, line: string): string {
  const r = m.rng.uniform();
  if (r < 0.45) return seal(m.mutateText(body(line)));
  if (r < 0.85) return m.mutateText(line);
  return m.randomText(130);
}

export function fuzzFrameDecoder(m: Mutator, cases: number, t: Tally): void {
  const c = corpus();
  const pool = [...c.commands, ...c.replies];
  for (let i = 0; i < cases; i++) {
    t.cases++;
    const line = mutatedLine(m, m.pick(pool));
    try {
      const d = decodeLine(line);
      if (!d.ok) {
        if (!(Number.isInteger(d.code) && d.code > 0)) crash(t, `refusal without an error code: ${d.code}`, line);
        else rejected(t, `FRAME_${d.code}`);
        continue;
      }
      const f = d.frame;
      // A frame the decoder accepts must be what the protocol allows: printable fields, no '*'.
      if (!/^[\x21-\x29\x2b-\x7e]+$/.test(f.tag) || !f.fields.every((x) => /^[\x21-\x29\x2b-\x7e]+$/.test(x)) || f.fields.length > 15) {
        crash(t, `accepted a frame outside the grammar: ${JSON.stringify(f)}`, line);
      } else t.accepted++;
    } catch (e) {
      crash(t, `decodeLine threw ${(e as Error).name}: ${(e as Error).message}`, line);
    }
  }
}

/** Stream edits: damaged lines (mostly re-sealed), lines lost, repeated, swapped or foreign. */
function mutatedStream(m: Mutator, lines: string[]): string[] {
  const out = lines.slice();
  for (let k = 1 + m.int(3); k > 0; k--) {
    const i = m.int(out.length);
    switch (m.int(6)) {
      case 0: out.splice(i, 1); break;
      case 1: out.splice(i, 0, out[i]); break;
      case 2: [out[i], out[out.length - 1 - i]] = [out[out.length - 1 - i], out[i]]; break;
      case 3: out.splice(i, 0, m.pick(corpus().replies)); break;
      default: out[i] = mutatedLine(m, out[i] ?? "");
    }
  }
  return out;
}

/** Feeds a stream as DeviceClient.readStream does; null when it ends without a trailer (a timeout). */
function readLikeClient(settings: RawCapture["settings"], lines: string[]): RawCapture | null {
  const reader = new CaptureStreamReader(settings);
  for (const line of lines) {
    const d = decodeLine(line);
    if (!d.ok) throw new StreamDefect(`corrupt line (error ${d.code})`);
    if (d.frame.tag === "ER") throw new DeviceError(Number(d.frame.fields[0]), "MS");
    const done = reader.accept(d.frame);
    if (done) return done;
  }
  return null;
}

export function fuzzStreamReader(m: Mutator, cases: number, t: Tally): void {
  const c = corpus();
  for (let i = 0; i < cases; i++) {
    t.cases++;
    const s = m.pick(c.streams);
    const lines = mutatedStream(m, s.lines);
    const input = lines.join("\n");
    try {
      const raw = readLikeClient(s.settings, lines);
      if (raw === null) {
        rejected(t, "INCOMPLETE_STREAM"); // the client would wait, then raise DEVICE_TIMEOUT
        continue;
      }
      const n = raw.ticks.length;
      if (raw.levels.length !== n || !raw.levels.every((l) => l === 0 || l === 1) || !raw.ticks.every((k) => Number.isSafeInteger(k))) {
        crash(t, "accepted a capture with impossible edges", input);
      } else t.accepted++;
    } catch (e) {
      // The client turns a StreamDefect into a resend and, in the end, CAPTURE_DAMAGED.
      if (e instanceof StreamDefect) rejected(t, "CAPTURE_DAMAGED");
      else classify(t, e, input, [DeviceError, ProtocolError]);
    }
  }
}

export function fuzzCaptureFile(m: Mutator, cases: number, t: Tally): void {
  const c = corpus();
  for (let i = 0; i < cases; i++) {
    t.cases++;
    const base = m.pick(c.captureFiles);
    const text = m.chance(0.5) ? m.mutateText(base, 4) : JSON.stringify(m.mutateJson(JSON.parse(base)));
    try {
      const cap = parseCapture(text);
      // What the analyze command does next with a file it accepted.
      analyzeCapture(cap);
      t.accepted++;
    } catch (e) {
      classify(t, e, text, [CaptureFileError, MeasureError]);
    }
  }
}

export function fuzzDeviceProfile(m: Mutator, cases: number, t: Tally): void {
  const lines = corpus().profileLines;
  for (let i = 0; i < cases; i++) {
    t.cases++;
    const mutated = mutatedStream(m, lines);
    const frames: Frame[] = mutated.map((l) => decodeLine(l)).flatMap((d) => (d.ok && d.frame.tag !== "OK" ? [d.frame] : []));
    try {
      const p = parseProfile(frames);
      if (!(p.tick_hz > 0 || p.tick_hz <= 0) || p.drives.length === 0 || p.tanks.length === 0) crash(t, "accepted an empty profile", mutated.join("\n"));
      else t.accepted++;
    } catch (e) {
      classify(t, e, mutated.join("\n"), [ProtocolError]);
    }
  }
}

export function fuzzCalibrationProfile(m: Mutator, cases: number, t: Tally): void {
  const base = corpus().calibration;
  const baseText = JSON.stringify(base, null, 2);
  for (let i = 0; i < cases; i++) {
    t.cases++;
    let input = "";
    try {
      // Text damage goes through JSON.parse as the store's reader does (PROFILE_UNREADABLE there).
      if (m.chance(0.3)) {
        input = m.mutateText(baseText, 4);
        let raw: unknown;
        try {
          raw = JSON.parse(input);
        } catch {
          rejected(t, "PROFILE_UNREADABLE");
          continue;
        }
        validateProfile(raw);
      } else {
        const raw = m.mutateJson(JSON.parse(baseText));
        input = JSON.stringify(raw) ?? "undefined";
        validateProfile(raw);
      }
      t.accepted++;
    } catch (e) {
      classify(t, e, input, [CalibrationError]);
    }
  }
}

export function fuzzScenario(m: Mutator, cases: number, t: Tally): void {
  const c = corpus();
  for (let i = 0; i < cases; i++) {
    t.cases++;
    const base = m.pick(c.scenarios);
    let input = "";
    try {
      let raw: unknown;
      if (m.chance(0.3)) {
        input = m.mutateText(base, 4);
        try {
          raw = JSON.parse(input);
        } catch {
          rejected(t, "SCENARIO_NOT_JSON"); // loadScenario reports it as ScenarioError "(file)"
          continue;
        }
      } else {
        raw = m.mutateJson(JSON.parse(base));
        input = JSON.stringify(raw) ?? "undefined";
      }
      const sc = validateScenario(raw);
      const p = sc.part;
      if (!(p.inductance_h > 0 && Number.isFinite(p.inductance_h) && p.series_ohm > 0)) crash(t, "accepted a scenario with an impossible part", input);
      else t.accepted++;
    } catch (e) {
      // ScenarioError names the field but has no `code` (see docs/reliability.md): counted apart.
      classify(t, e, input, [ScenarioError], [ScenarioError]);
    }
  }
}
