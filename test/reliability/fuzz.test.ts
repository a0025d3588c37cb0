// Fuzzing with a fixed seed: 10 000 cases over the firmware's command parser (wasm, through the
// simulated tester) and the host's frame decoder, capture stream reader, capture file reader,
// device and calibration profile readers and scenario reader. No case may crash, trap or hang
// (a hang would stop the run at vitest's timeout), and every rejection must carry a stable code.
// The benchmark runs 100 000 cases with another seed.

import { describe, expect, it } from "vitest";
import { runFuzz } from "./fuzz/run-fuzz.ts";
import type { Tally } from "./fuzz/tally.ts";

const tallies: Tally[] = runFuzz(10_000, 20261202);
const byName = (n: string) => tallies.find((t) => t.target === n)!;

describe("fuzzing, fixed seed, 10 000 cases", () => {
  it("runs 10 000 cases in all", () => {
    expect(tallies.reduce((a, t) => a + t.cases, 0)).toBe(10_000);
  });

  for (const t of tallies) {
    it(`${t.target}: ${t.cases} cases, no crash, every rejection coded`, () => {
      expect(t.samples.filter((s) => s.startsWith("crash"))).toEqual([]);
      expect(t.crashes).toBe(0);
      if (t.target !== "scenario") expect(t.uncoded).toBe(0);
      // The mutations must reach past the first check: some inputs accepted, several kinds refused.
      expect(t.rejected).toBeGreaterThan(0);
      expect(t.accepted + t.rejected + t.uncoded + t.crashes + t.known).toBeGreaterThanOrEqual(t.cases);
    });
  }

  // Finding (firmware/assembly/capture.ts stepCapture, host/src/sim/sim-tester.ts MAX_POLLS_PER_RUN):
  // MS accepts quiet_us from 1 and timeout_ms up to 5000, and while it captures the firmware polls
  // every quiet/8 ticks; for quiet_us 1 and a 1 s window that is 8 million polls, the simulator's
  // guard (1 million) throws "did not go idle", and through SimTransport that throw escapes from a
  // setImmediate callback, ending the host process. Marked it.fails until fixed.
  it.fails("firmware-parser: every accepted MS completes in the simulated tester", () => {
    expect(byName("firmware-parser").known).toBe(0);
  });

  // Finding (host/src/sim/scenario.ts, class ScenarioError): a malformed scenario is refused with
  // the field named but without a stable `code`, unlike every other reader. Marked it.fails until fixed.
  it.fails("scenario: every rejection carries a stable code", () => {
    expect(byName("scenario").uncoded).toBe(0);
  });
});
