import { describe, expect, it } from "vitest";
import { bigText, BIG_ROWS } from "./big-digits.ts";
import { assessStability, History, sparkline } from "./watch-trend.ts";

describe("watch helpers", () => {
  it("sparkline scales between the extremes and stays flat for spread below flat_span", () => {
    expect(sparkline([1, 2, 3, 4, 5, 6, 7, 8])).toBe("▁▂▃▄▅▆▇█");
    expect(sparkline([1, 1.001, 0.999], 0.01)).toBe("▄▄▄");
    expect(sparkline([])).toBe("");
  });

  it("stability: steady within U, drifting when the values move one way, unsteady otherwise", () => {
    const U = [1, 1, 1, 1, 1];
    expect(assessStability([10, 10.2], U).state).toBe("gathering");
    expect(assessStability([10, 10.3, 10.1, 10.5, 10.2], U).state).toBe("steady");
    expect(assessStability([10, 11, 12, 13, 14], U)).toMatchObject({ state: "drifting", slope_per_reading: 1 });
    expect(assessStability([10, 13, 10, 13, 10], U).state).toBe("unsteady");
  });

  it("history keeps the last entries", () => {
    const h = new History(3);
    for (let i = 0; i < 5; i++) h.push(i, 0.1);
    expect(h.values).toEqual([2, 3, 4]);
  });

  it("large characters have five rows of equal width", () => {
    const rows = bigText("330.4 µH");
    expect(rows.length).toBe(BIG_ROWS);
    expect(rows[4]).toContain("█");
    expect(bigText("10")[0]).toBe("  █  ████");
  });
});
