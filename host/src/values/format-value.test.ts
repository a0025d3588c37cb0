import { describe, expect, it } from "vitest";
import { formatMeasured, iecCode } from "./format-value.ts";
import { parseValue } from "./parse-value.ts";

describe("formatting values", () => {
  it("prints as many digits as the uncertainty supports (JCGM 100:2008 §7.2.6: U to two figures)", () => {
    expect(formatMeasured(10.4213e-6, 0.1e-6, "H")).toBe("10.42 µH ± 0.10 µH");
    expect(formatMeasured(331.52e-6, 3.8e-6, "H")).toBe("331.5 µH ± 3.8 µH");
    expect(formatMeasured(1.00004e-3, 11.55e-6, "H")).toBe("1.000 mH ± 0.012 mH");
    expect(formatMeasured(4.7e-6, undefined, "H")).toBe("4.700 µH");
  });

  it("writes IEC 60062 codes that read back to the same value (IEC 60062 style: 4u7, 330u, 1m5)", () => {
    expect(iecCode(4.7e-6)).toBe("4u7");
    expect(iecCode(330e-6)).toBe("330u");
    expect(iecCode(1.5e-3)).toBe("1m5");
    expect(iecCode(10e-6)).toBe("10u");
    expect(iecCode(4.7)).toBe("4R7");
    expect(iecCode(2.21e-6, 3)).toBe("2u21");
    for (const v of [4.7e-6, 330e-6, 1.5e-3, 82e-3, 1.2e-6, 47e-9]) expect(parseValue(iecCode(v)).value).toBeCloseTo(v, 15);
  });
});

describe("a value smaller than its uncertainty", () => {
  it("takes the uncertainty's prefix, so U keeps two significant digits", () => {
    expect(formatMeasured(832e-15, 9337e-15, "F")).toBe("0.8 pF ± 9.3 pF");
    expect(formatMeasured(-906e-12, 1575e-12, "s")).toBe("-0.9 ns ± 1.6 ns");
    expect(formatMeasured(20.3e-9, 2.2e-9, "s")).toBe("20.3 ns ± 2.2 ns");
  });
});
