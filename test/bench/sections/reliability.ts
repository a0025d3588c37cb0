// Reliability: 100 000 fuzz cases over the firmware's parser (wasm) and the host's readers, and a
// soak of 10 000 readings on simulated testers whose links are damaged at a steady rate, with two
// parts swapped between readings. Every reading is checked against the simulator's truth.
// docs/reliability.md explains each figure.

import { setFlagsFromString } from "node:v8";
import { runInNewContext } from "node:vm";
import { runFuzz } from "../../reliability/fuzz/run-fuzz.ts";
import { sum } from "../../reliability/fuzz/tally.ts";
import { runSoak, SOAK_FAULTS } from "../../reliability/soak.ts";
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { runHostileCorpus } from "../../reliability/hostile/corpus.ts";
import type { BenchSection } from "./types.ts";

const FUZZ_CASES = 100_000;
const SOAK_READINGS = 10_000;

/** Heap in use after a full collection (the flag can be set at run time; a new context exposes gc). */
function heapAfterGc(): number {
  setFlagsFromString("--expose-gc");
  const gc = runInNewContext("gc") as () => void;
  gc();
  return process.memoryUsage().heapUsed;
}

export const reliabilitySection: BenchSection = {
  name: "reliability",
  async run(progress) {
    const hostileDir = mkdtempSync(join(tmpdir(), "henrytick-bench-hostile-"));
    const hostile = await runHostileCorpus(hostileDir).finally(() => rmSync(hostileDir, { recursive: true, force: true }));
    for (const s of hostile.samples) progress(`hostile: ${s}`);

    const t0 = performance.now();
    const tallies = runFuzz(FUZZ_CASES, 7_000_001, (t) => progress(`fuzz ${t.target}: ${t.cases} cases, ${t.crashes} crashes, ${t.uncoded} uncoded, ${t.known} known`));
    const fuzz = sum(tallies);
    const fuzz_s = (performance.now() - t0) / 1000;

    const t1 = performance.now();
    const soak = await runSoak(
      { measurements: SOAK_READINGS, lanes: 4, seed: 31337, faults: SOAK_FAULTS, unplug_every: 1000, onProgress: (n) => progress(`soak: ${n} readings`) },
      heapAfterGc,
    );
    const soak_s = (performance.now() - t1) / 1000;
    const harmful = soak.faulted - soak.harmless;
    for (const s of soak.wrong_samples) progress(`wrong result: ${s}`);
    const injected = Object.entries(soak.faults_injected).filter(([, n]) => n > 0).map(([k, n]) => `${k} ${n}`).join(", ");
    const errors = Object.entries(soak.errors_by_code).map(([k, n]) => `${k} ${n}`).join(", ");

    return {
      figures: {
        "reliability.hostile_files": hostile.tried,
        "reliability.hostile_wrong_numbers": hostile.wrong_numbers,
        "reliability.hostile_crashes_or_hangs": hostile.crashes + hostile.hangs,
        "reliability.fuzz_cases": fuzz.cases,
        "reliability.crashes": fuzz.crashes + soak.crashes,
        "reliability.fuzz_uncoded_rejections": fuzz.uncoded,
        "reliability.fuzz_known_failures": fuzz.known,
        "reliability.fuzz_cases_per_s": fuzz.cases / fuzz_s,
        "reliability.soak_measurements": soak.measurements,
        "reliability.soak_completed": soak.completed,
        "reliability.soak_failed_coded": soak.failed_coded,
        "reliability.soak_faulted": soak.faulted,
        "reliability.soak_recovered": soak.recovered,
        "reliability.wrong_results": soak.wrong_results,
        "reliability.faults_detected_ratio": harmful > 0 ? soak.detected / harmful : null,
        "reliability.soak_heap_growth_mb": soak.heap_growth_bytes / 2 ** 20,
        "reliability.soak_readings_per_s": soak.measurements / soak_s,
      },
      notes: {
        "reliability.hostile_files": `the hostile corpus (test/reliability/hostile/corpus.ts): doctored captures, paths that are not captures, calibration profiles; ${hostile.refused} refused with a code (${Object.entries(hostile.codes).map(([k, n]) => `${k} ${n}`).join(", ")}), ${hostile.other_code} with another code than the case's, ${hostile.skipped} skipped`,
        "reliability.hostile_wrong_numbers": "cases that gave a number (or a profile that was accepted) where a coded refusal is due; goal 0",
        "reliability.hostile_crashes_or_hangs": "cases that ended in an uncoded error, a crash of the CLI process or no end within 30 s; goal 0",
        "reliability.fuzz_cases": tallies.map((t) => `${t.target} ${t.cases}`).join(", "),
        "reliability.crashes": "fuzz crashes (exception outside the documented error class, wasm trap, malformed output) + soak errors without a code",
        "reliability.fuzz_uncoded_rejections": "rejections by the right error class but without a stable code (ScenarioError)",
        "reliability.fuzz_known_failures": "MS with a very short quiet time trips the simulator's poll guard (docs/reliability.md)",
        "reliability.soak_measurements": `4 simulated testers side by side, two parts swapped between readings; faults injected: ${injected}`,
        "reliability.soak_failed_coded": errors,
        "reliability.soak_faulted": `readings during which a fault was injected; ${soak.harmless} of them harmless (the fault missed every line the reading used)`,
        "reliability.wrong_results": `capture not the pulse's own (${soak.wrong_capture}) or L/f0 beyond 2 U (k = 2); ${soak.outside_u} more between U and 2 U; max |error|/U: L ${soak.max_z_l.toFixed(2)}, f0 ${soak.max_z_f0.toFixed(2)}`,
        "reliability.faults_detected_ratio": `faulted readings noticed (resend or coded error) / faulted readings not harmless; ${soak.clean_failures} failures of readings with no fault of their own`,
        "reliability.soak_heap_growth_mb": "heap after gc at the end minus after the first 800 readings",
      },
    };
  },
};
