// End-to-end reading rate on the in-process simulated tester (pulse, stream, analysis), for a
// bench application that knows the part (fixed setting, estimate from a first reading: no
// probe) and for a fresh part each time (safe probe and automatic ranging).

import { measurePart, openTester } from "../../../host/src/index.ts";
import { knownPartReadingsPerS } from "./known-part.ts";
import type { BenchSection } from "./types.ts";

export const e2eSection: BenchSection = {
  name: "e2e",
  async run(progress) {
    const t = await openTester({ scenario: "drawer-choke-330u" });
    try {
      const n = 20;
      const known = await knownPartReadingsPerS(t.client, n);
      progress(`${n} fixed-setting readings in ${known.seconds.toFixed(2)} s`);
      const t1 = performance.now();
      const m = 5;
      for (let i = 0; i < m; i++) await measurePart(t.client);
      const s2 = (performance.now() - t1) / 1000;
      return {
        figures: { "e2e.readings_per_s": known.per_s, "e2e.ranged_readings_per_s": m / s2 },
        notes: {
          "e2e.readings_per_s": "in-process, fixed setting with the part known (no probe); paced by the firmware's rest between pulses (20 ms, or 10x the charge)",
          "e2e.ranged_readings_per_s": "in-process, each reading with its own safe probe and automatic ranging",
        },
      };
    } finally {
      await t.close();
    }
  },
};
