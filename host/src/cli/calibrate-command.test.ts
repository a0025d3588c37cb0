// Values on the calibrate command line: SI prefixes and the IEC 60062 letter-for-decimal-point
// style (IEC 60062: 4n7 = 4.7 nF), with or without the unit letter.

import { describe, expect, it } from "vitest";
import { parseQuantity } from "./calibrate-command.ts";

describe("parseQuantity", () => {
  it.each([
    ["330u", "H", 330e-6], ["330uH", "H", 330e-6], ["0.1u", "H", 0.1e-6], ["4n7", "F", 4.7e-9], ["4n7F", "F", 4.7e-9],
    ["100p", "F", 100e-12], ["1.5e-3", "H", 1.5e-3], ["2µ2", "H", 2.2e-6], ["1m5", "H", 1.5e-3],
  ])("%s (%s) = %d", (text, unit, value) => {
    expect(parseQuantity(text, "x", unit)! / value).toBeCloseTo(1, 12);
  });

  it.each(["lots", "-1u", "4n7n", "", "1q"])("refuses %j with the option named", (text) => {
    expect(() => parseQuantity(text, "cap-f", "F")).toThrow(/--cap-f/);
  });

  it("is optional only when asked", () => {
    expect(parseQuantity(undefined, "ref-cs-f", "F", { optional: true })).toBeUndefined();
    expect(() => parseQuantity(undefined, "ref-h", "H")).toThrow(/--ref-h is required/);
  });
});
