import { describe, expect, it } from "vitest";
import { openTester } from "../open-tester.ts";
import { measureAbortable, MeasureAbortedError } from "./abortable-measure.ts";
import { classify } from "./classify.ts";

describe("classify (library entry point)", () => {
  it("takes trade notation and reproduces an ISO 14253-1 decision (10 µH ±5 %, 10.42 µH, U = 0.10 µH, computed)", () => {
    const c = classify({ inductance_h: 10.42e-6, inductance_u_h: 0.1e-6 }, { nominal: "10u", tolerance: "5%" });
    expect(c.decision).toBe("inconclusive");
    expect(c.p_conform).toBeCloseTo(0.9452, 4);
    expect(c.limits.lower).toBeCloseTo(9.5e-6, 15);
  });

  it("reads the tolerance letter on the nominal, or a fraction", () => {
    expect(classify({ inductance_h: 4.8e-6, inductance_u_h: 0.05e-6 }, { nominal: "4u7J" }).decision).toBe("conforming");
    expect(classify({ inductance_h: 5.0e-6, inductance_u_h: 0.05e-6 }, { nominal: 4.7e-6, tolerance: 0.05 }).decision).toBe("nonconforming");
    expect(() => classify({ inductance_h: 1, inductance_u_h: 0 }, { nominal: "10u" })).toThrow(TypeError);
  });
});

describe("measureAbortable", () => {
  it("rejects at once with code ABORTED and leaves the tester usable", async () => {
    const t = await openTester({ scenario: "drawer-choke-330u" });
    try {
      const ac = new AbortController();
      const p = measureAbortable(t.client, { signal: ac.signal });
      ac.abort();
      await expect(p).rejects.toBeInstanceOf(MeasureAbortedError);
      await expect(measureAbortable(t.client, { signal: ac.signal })).rejects.toMatchObject({ code: "ABORTED" });
      const messages: string[] = [];
      const r = await measureAbortable(t.client, { onProgress: (m) => messages.push(m) });
      expect(Math.abs(r.analysis.inductance_h / 330e-6 - 1)).toBeLessThan(0.02);
      expect(messages.some((m) => m.startsWith("measuring"))).toBe(true);
    } finally {
      await t.close();
    }
  });
});
