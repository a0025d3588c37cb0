// Fuzz target: the firmware's receive path and command parser, running as wasm in the simulated
// tester. Inputs are damaged command lines (some re-sealed with a correct CRC so they reach the
// argument checks), random bytes, over-long lines and bursts of several lines. A case crashes if
// the wasm traps, the firmware never goes idle (the simulator's poll guard), or any byte it sends
// back is not a well-formed frame with a known tag; every ER it sends must carry a known code.

import { decodeLine } from "../../../host/src/device/frames.ts";
import { SimTester } from "../../../host/src/sim/sim-tester.ts";
import { QUICK_PART } from "../sim-rig.ts";
import { corpus } from "./corpus.ts";
import { body, Mutator, seal } from "./mutate.ts";
import type { Tally } from "./tally.ts";
import { crash, known, rejected } from "./tally.ts";

/** Every tag docs/protocol.md lets the firmware send. */
const FIRMWARE_TAGS = new Set(["OK", "ER", "ID", "PT", "PR", "PC", "PH", "PD", "PS", "PL", "PX", "CH", "CD", "CE", "SR", "CT", "TK"]);
const LAST_ERROR_CODE = 11;

class FuzzedTester {
  sim!: SimTester;
  out = "";
  constructor(private readonly part: typeof QUICK_PART | null, private readonly seed: number) {
    this.restart();
  }

  restart(): void {
    this.sim = new SimTester({ part: this.part, seed: this.seed });
    this.out = "";
    this.sim.onOutput((b) => (this.out += new TextDecoder("latin1").decode(b)));
  }
}

function buildInput(m: Mutator): string {
  const c = corpus();
  const cmd = m.pick(c.commands);
  const r = m.rng.uniform();
  // Re-sealed token swaps keep the frame's shape, so the boundary values reach the argument checks.
  if (r < 0.2) return seal(m.replaceToken(body(cmd))) + "\n";
  if (r < 0.4) return seal(m.mutateText(body(cmd))) + "\n";
  if (r < 0.6) return m.mutateText(cmd) + "\n";
  if (r < 0.75) return m.randomText(140) + "\n";
  if (r < 0.85) return m.pick(["MS ", "ID", "", "*", " "]) + "9".repeat(100 + m.int(200)) + m.pick(["\n", "\r\n", "*0000\n"]);
  let burst = "";
  for (let k = 1 + m.int(4); k > 0; k--) burst += m.chance(0.5) ? m.pick(c.commands) + "\n" : m.mutateText(m.pick(c.commands)) + m.pick(["\n", "\r\n", "", "\n\n"]);
  return burst + "\n";
}

/** Checks everything the tester sent for one case; returns the ER codes it contained. */
function checkOutput(t: Tally, out: string, input: string): number[] | null {
  if (out.length > 0 && !out.endsWith("\n")) {
    crash(t, "reply ends in a partial line while the tester is idle", input);
    return null;
  }
  const codes: number[] = [];
  for (const line of out.split("\n")) {
    if (line.length === 0) continue;
    const d = decodeLine(line);
    if (!d.ok) {
      crash(t, `tester sent a malformed frame (error ${d.code}): ${line}`, input);
      return null;
    }
    if (!FIRMWARE_TAGS.has(d.frame.tag)) {
      crash(t, `tester sent an unknown tag: ${line}`, input);
      return null;
    }
    if (d.frame.tag === "ER") {
      const code = Number(d.frame.fields[0]);
      if (!Number.isInteger(code) || code < 1 || code > LAST_ERROR_CODE || d.frame.fields.length < 2) {
        crash(t, `ER frame without a known code: ${line}`, input);
        return null;
      }
      codes.push(code);
    }
  }
  return codes;
}

export function fuzzFirmware(m: Mutator, cases: number, t: Tally): void {
  // Open terminals keep a pulse cheap; one case in twenty runs on a tester with a coil fitted.
  const testers = [new FuzzedTester(null, 3), new FuzzedTester(QUICK_PART, 4)];
  for (let i = 0; i < cases; i++) {
    t.cases++;
    const tester = testers[m.chance(0.05) ? 1 : 0];
    const input = buildInput(m);
    tester.out = "";
    try {
      if (m.chance(0.3)) tester.sim.advance(m.rng.uniform() * 2);
      tester.sim.input(Uint8Array.from(input, (ch) => ch.charCodeAt(0) & 0xff));
    } catch (e) {
      // A short quiet time over a long window makes the firmware poll every quiet/8 for the whole
      // window, more often than the simulator's guard allows: a reported finding, kept apart.
      if (/did not go idle/.test((e as Error).message) && /^MS /.test(input)) known(t, "SIM_POLL_GUARD", input);
      else crash(t, `${(e as Error).name}: ${(e as Error).message}`, input);
      tester.restart();
      continue;
    }
    const codes = checkOutput(t, tester.out, input);
    if (codes === null) continue;
    if (codes.length === 0) t.accepted++;
    else {
      rejected(t, `ER_${codes[0]}`);
      for (const c of codes.slice(1)) t.codes[`ER_${c}`] = (t.codes[`ER_${c}`] ?? 0) + 1;
    }
  }
}
