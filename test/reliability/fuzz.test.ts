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

  // Found by this campaign and fixed: MS accepted quiet_us from 1 and the firmware polled every
  // quiet/8 ticks, so a 1 s window took 8 million polls and tripped the simulator's guard, whose
  // throw escaped SimTransport and ended the process. The firmware now asks for 10 µs or more and
  // polls at most every 10 µs; SimTransport turns a simulator fault into a closed link.
  it("firmware-parser: every accepted MS completes in the simulated tester", () => {
    expect(byName("firmware-parser").known).toBe(0);
  });

  // Found and fixed: ScenarioError now carries the code BAD_SCENARIO.
  it("scenario: every rejection carries a stable code", () => {
    expect(byName("scenario").uncoded).toBe(0);
  });
});
