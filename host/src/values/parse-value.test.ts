import { describe, expect, it } from "vitest";
import { parseValue, ValueSyntaxError } from "./parse-value.ts";
import { parseTolerance, toleranceLimits, TOLERANCE_LETTERS } from "./tolerance.ts";

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
    ["22", 22],
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
