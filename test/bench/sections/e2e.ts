// End-to-end reading rate on the in-process simulated tester (ranging, pulse, stream, analysis).

import { measurePart, openTester } from "../../../host/src/index.ts";
import type { BenchSection } from "./types.ts";

export const e2eSection: BenchSection = {
  name: "e2e",
  async run(progress) {
    const t = await openTester({ scenario: "drawer-choke-330u" });
    try {
      const n = 20;
      const t0 = performance.now();
      for (let i = 0; i < n; i++) await measurePart(t.client, { drive: 1, tank: 2, charge_us: 17 });
      const s = (performance.now() - t0) / 1000;
      progress(`${n} fixed-setting readings in ${s.toFixed(2)} s`);
      const t1 = performance.now();
      const m = 5;
      for (let i = 0; i < m; i++) await measurePart(t.client);
      const s2 = (performance.now() - t1) / 1000;
      return {
        figures: { "e2e.readings_per_s": n / s, "e2e.ranged_readings_per_s": m / s2 },
        notes: {
          "e2e.readings_per_s": "in-process, fixed setting; paced by the firmware's 20 ms rest between pulses",
          "e2e.ranged_readings_per_s": "in-process, with probe pulses and ranging",
        },
      };
    } finally {
      await t.close();
    }
  },
};
