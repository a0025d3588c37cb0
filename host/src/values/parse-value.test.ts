import { describe, expect, it } from "vitest";
import { formatPercent, formatValue } from "./format-value.ts";
import { parseValue, parseValueIn, ValueError, ValueSyntaxError } from "./parse-value.ts";
import { nominalTolerance, parseTolerance, toleranceLimits, TOLERANCE_LETTERS } from "./tolerance.ts";

const close = (a: number, b: number) => expect(Math.abs(a / b - 1)).toBeLessThan(1e-12);

describe("parseValue: IEC 60062 letter-and-digit codes", () => {
  // Source: IEC 60062 (secondary source; value from memory of the standard's table).
  it.each([
    ["4R7", "Ω", 4.7],
    ["4K7", "Ω", 4700],
    ["4n7", "F", 4.7e-9],
    ["2u2", "F", 2.2e-6],
    ["47p", "F", 47e-12],
  ])("%s = %f %s (IEC 60062 letter code)", (text, unit, value) => {
    close(parseValue(text, unit).value, value);
  });

  // The inductor style the notes call common: `4u7`, `330u`, `1m5`.
  it.each([
    ["4u7", 4.7e-6],
    ["330u", 330e-6],
    ["1m5", 1.5e-3],
    ["4µ7", 4.7e-6],
    ["100n", 100e-9],
  ])("%s henries", (text, value) => close(parseValue(text).value, value));

  it("reads a trailing tolerance letter after a code (IEC 60062)", () => {
    expect(parseValue("4u7J")).toMatchObject({ toleranceLetter: "J", tolerance_rel: 0.05 });
    expect(parseValue("330uK")).toMatchObject({ toleranceLetter: "K", tolerance_rel: 0.1 });
    expect(parseValue("1m5M")).toMatchObject({ toleranceLetter: "M", tolerance_rel: 0.2 });
    close(parseValue("330uK").value, 330e-6);
  });

  it("keeps K and M after plain digits as multipliers, as IEC 60062 writes 47K for 47 kΩ", () => {
    expect(parseValue("47K", "Ω")).toEqual({ value: 47000 });
    expect(parseValue("2M", "Ω")).toEqual({ value: 2e6 });
  });
});

describe("parseValue: SI prefixes", () => {
  it.each([
    ["4.7uH", 4.7e-6],
    ["4.7 µH", 4.7e-6],
    ["4.7 μH", 4.7e-6], // Greek mu as typed on some keyboards
    ["4.7e-6", 4.7e-6],
    ["4.7E-6 H", 4.7e-6],
    ["0.33m", 0.33e-3],
    [".5u", 0.5e-6],
    ["1e-3", 1e-3],
    ["22H", 22],
    ["2.2 µ", 2.2e-6],
  ])("%s", (text, value) => close(parseValue(text).value, value));

  it.each(["", "abc", "4.7x", "4u7u", "1..2u", "u7"])("refuses %j with code BAD_VALUE and an example", (text) => {
    expect(() => parseValue(text)).toThrow(ValueSyntaxError);
    expect(() => parseValue(text)).toThrow(/write it like 4\.7u/);
  });
});

describe("tolerances", () => {
  it("has the IEC 60062 tolerance letters", () => {
    expect(TOLERANCE_LETTERS).toEqual({ B: 0.001, C: 0.0025, D: 0.005, F: 0.01, G: 0.02, J: 0.05, K: 0.1, M: 0.2 });
  });

  it("reads percentages, letters, asymmetric and absolute forms", () => {
    expect(parseTolerance("5%")).toMatchObject({ kind: "relative", below_rel: 0.05, above_rel: 0.05 });
    expect(parseTolerance("± 2 %")).toMatchObject({ kind: "relative", below_rel: 0.02 });
    expect(parseTolerance("J")).toMatchObject({ kind: "relative", below_rel: 0.05 });
    expect(parseTolerance("+10%/-5%")).toMatchObject({ kind: "relative", below_rel: 0.05, above_rel: 0.1 });
    const abs = parseTolerance("0.5u");
    expect(abs.kind).toBe("absolute");
    const lim = toleranceLimits(10e-6, abs);
    close(lim.lower, 9.5e-6);
    close(lim.upper, 10.5e-6);
  });

  it("turns 10 µH ±5 % into 9.5 … 10.5 µH", () => {
    const lim = toleranceLimits(10e-6, parseTolerance("5%"));
    close(lim.lower, 9.5e-6);
    close(lim.upper, 10.5e-6);
  });

  it.each(["0%", "150%", "Q", "-3%", "five"])("refuses %j", (t) => expect(() => parseTolerance(t)).toThrow(ValueSyntaxError));
});

describe("parseValue: inductor marking for inductances (common trade practice, no source)", () => {
  it.each([
    ["4R7", 4.7e-6],
    ["R47", 0.47e-6],
    ["1R0", 1e-6],
    ["47R", 47e-6],
    ["100", 10e-6],
    ["101", 100e-6],
    ["471", 470e-6],
    ["102", 1e-3],
    ["220", 22e-6],
    ["4R7K", 4.7e-6],
  ])("%s reads as %f H (R is the decimal point in µH; three digits: two figures and a power of ten in µH)", (text, value) => close(parseValue(text).value, value));

  it("keeps R as the plain decimal point for other units (IEC 60062: 4R7 = 4.7 Ω)", () => {
    close(parseValue("4R7", "Ω").value, 4.7);
    close(parseValue("100", "Ω").value, 100);
  });

  it.each(["10", "4.7", "0.5", "22", "1000", "0.000010", "3"])("refuses a bare %j for an inductance, asking for a prefix", (text) => {
    expect(() => parseValue(text)).toThrow(ValueError);
    expect(() => parseValue(text)).toThrow(new RegExp(`write ${text.replace(".", "\\.")}u for .* µH or ${text.replace(".", "\\.")}m for`));
    try {
      parseValue(text);
    } catch (e) {
      expect((e as ValueError).code).toBe("AMBIGUOUS_VALUE");
    }
  });
});

describe("parseValue: the unit is checked", () => {
  it.each([
    ["10uF", /capacitance \(F\).*inductance \(H\): write 10u or 10uH/],
    ["10 µF", /capacitance/],
    ["4.7nF", /capacitance/],
    ["47 Ω", /resistance/],
    ["5V", /voltage/],
    ["10kHz", /frequency/],
  ])("refuses %j for an inductance with the right unit named", (text, message) => {
    expect(() => parseValue(text)).toThrow(message);
    try {
      parseValue(text);
    } catch (e) {
      expect((e as ValueError).code).toBe("WRONG_UNIT");
    }
  });

  it("refuses an inductance for a capacitance", () => {
    expect(() => parseValue("10uH", "F")).toThrow(/inductance \(H\); this option takes a capacitance \(F\): write 10u or 10uF/);
  });

  it("still reads a code ending in the tolerance letter F (4u7F: 4.7 µ, ±1 %) and a written-out 10uH F", () => {
    expect(parseValue("4u7F")).toMatchObject({ toleranceLetter: "F" });
    close(parseValue("4u7F").value, 4.7e-6);
    expect(parseValue("10uH F")).toMatchObject({ toleranceLetter: "F" });
  });

  it.each([
    ["330u", "H", 330e-6], ["330uH", "H", 330e-6], ["0.1u", "H", 0.1e-6], ["4n7", "F", 4.7e-9], ["4n7F", "F", 4.7e-9],
    ["100p", "F", 100e-12], ["1.5e-3", "H", 1.5e-3], ["2µ2", "H", 2.2e-6], ["1m5", "H", 1.5e-3], ["0.5f", "F", 0.5e-15],
    ["4K7", "Ω", 4700], ["1G", "Ω", 1e9],
  ])("reads the calibration forms %s (%s) the same as every other option", (text, unit, value) => close(parseValue(text, unit).value, value));
});

describe("parseValueIn: a range enforced up front", () => {
  const range = { min: 1e-6, max: 1, what: "what the tester measures" };
  it("refuses a value outside the range, naming the range with units", () => {
    expect(() => parseValueIn("4.7H", "H", range)).toThrow(/4\.7 H \("4\.7H"\) is outside what the tester measures, 1 µH to 1 H/);
    expect(() => parseValueIn("100n", "H", range)).toThrow(/100 nH/);
    close(parseValueIn("4R7", "H", range).value, 4.7e-6);
  });
});

describe("tolerance hints", () => {
  it.each(["0.5", "5", "0.05"])("refuses a bare %j and shows the ways to write it", (t) => {
    expect(() => parseTolerance(t)).toThrow(/has no unit: a relative tolerance is written 5%/);
    expect(() => parseTolerance(t)).toThrow(new RegExp(`an absolute one ${t.replace(".", "\\.")}u`));
  });
  it("names the nominal with its unit when an absolute tolerance is too wide", () => {
    expect(() => toleranceLimits(9.999999999999999e-6, parseTolerance("20u"))).toThrow(/for a nominal of 10 µH/);
    expect(parseTolerance("0.5u").text).toBe("±500 nH");
  });
});

describe("formatValue: sensible digits with units", () => {
  it.each([
    [4.7e-6, "H", "4.7 µH"],
    [9.999999999999999e-6, "H", "10 µH"],
    [1.027614591879771e-12, "F", "1.028 pF"],
    [20.16, "V", "20.16 V"],
    [1, "H", "1 H"],
    [330e-6, "H", "330 µH"],
  ])("%f %s → %s", (v, unit, text) => expect(formatValue(v as number, unit as string)).toBe(text));
  it("percentages", () => {
    expect(formatPercent(0.05)).toBe("5 %");
    expect(formatPercent(0.0025)).toBe("0.25 %");
  });
});

describe("values and limits without binary artefacts", () => {
  // The double nearest the written decimal (what Number("10e-6") gives), not 10 × 1e-6 = 9.999999999999999e-6.
  it.each([
    ["10u", 10e-6], ["4u7", 4.7e-6], ["R47", 0.47e-6], ["100", 10e-6], ["471", 470e-6], ["0.33m", 0.33e-3], ["1.5e-3u", 1.5e-9], ["22n", 22e-9], ["4K7", 4.7e3],
  ])("%s is exactly the written value", (text, value) => expect(parseValue(text, text === "4K7" ? "Ω" : "H").value).toBe(value));

  it("gives limits as decimal as the tolerance (10 µH ±5 % → 9.5 µH … 10.5 µH exactly)", () => {
    const nominal = parseValue("10u").value;
    expect(toleranceLimits(nominal, parseTolerance("5%"))).toEqual({ lower: 9.5e-6, upper: 10.5e-6 });
    expect(toleranceLimits(parseValue("4u7").value, parseTolerance("J"))).toEqual({ lower: 4.465e-6, upper: 4.935e-6 });
    expect(toleranceLimits(parseValue("330u").value, parseTolerance("+10%/-5%"))).toEqual({ lower: 313.5e-6, upper: 363e-6 });
    expect(toleranceLimits(nominal, parseTolerance("0.3u"))).toEqual({ lower: 9.7e-6, upper: 10.3e-6 });
    expect(JSON.stringify(toleranceLimits(nominal, parseTolerance("5%")))).toBe('{"lower":0.0000095,"upper":0.0000105}');
  });
});

describe("a tolerance letter on the nominal and a tolerance beside it (letters: common trade practice, no source)", () => {
  it("takes either alone, or both when they agree", () => {
    expect(nominalTolerance(parseValue("10uH F"))).toMatchObject({ below_rel: 0.01, above_rel: 0.01 });
    expect(nominalTolerance(parseValue("10u"), parseTolerance("5%"))).toMatchObject({ below_rel: 0.05 });
    expect(nominalTolerance(parseValue("4u7J"), parseTolerance("5%"))).toMatchObject({ below_rel: 0.05 });
    expect(nominalTolerance(parseValue("10u"))).toBeUndefined();
  });
  it.each([["10uH F", "5%"], ["4u7J", "K"], ["330uK", "0.5u"], ["1m5M", "+20%/-10%"]])("refuses %s with %s (TOLERANCE_CONFLICT), dropping neither", (nominal, tol) => {
    expect(() => nominalTolerance(parseValue(nominal), parseTolerance(tol))).toThrow(expect.objectContaining({ code: "TOLERANCE_CONFLICT" }));
  });
});
