// Runs every fuzz target with its share of the cases from one seed; shared by the test (10 000
// cases) and the benchmark (100 000). The shares favour the targets whose inputs come straight off
// the wire, where damage is most likely.

import { fuzzFirmware } from "./firmware-target.ts";
import { fuzzCalibrationProfile, fuzzCaptureFile, fuzzDeviceProfile, fuzzFrameDecoder, fuzzScenario, fuzzStreamReader } from "./host-targets.ts";
import { Mutator } from "./mutate.ts";
import type { Tally } from "./tally.ts";
import { newTally } from "./tally.ts";

export const FUZZ_TARGETS: { name: string; share: number; run: (m: Mutator, cases: number, t: Tally) => void }[] = [
  { name: "firmware-parser", share: 0.25, run: fuzzFirmware },
  { name: "frame-decoder", share: 0.2, run: fuzzFrameDecoder },
  { name: "stream-reader", share: 0.2, run: fuzzStreamReader },
  { name: "capture-file", share: 0.1, run: fuzzCaptureFile },
  { name: "device-profile", share: 0.08, run: fuzzDeviceProfile },
  { name: "calibration-profile", share: 0.07, run: fuzzCalibrationProfile },
  { name: "scenario", share: 0.1, run: fuzzScenario },
];

export function runFuzz(totalCases: number, seed: number, onTarget?: (t: Tally) => void): Tally[] {
  const tallies: Tally[] = [];
  let left = totalCases;
  FUZZ_TARGETS.forEach((target, k) => {
    const n = k === FUZZ_TARGETS.length - 1 ? left : Math.round(totalCases * target.share);
    left -= n;
    const t = newTally(target.name);
    target.run(new Mutator(seed * 31 + k), n, t);
    tallies.push(t);
    onTarget?.(t);
  });
  return tallies;
}
