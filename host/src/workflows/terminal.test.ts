import { describe, expect, it } from "vitest";
import { makeStyle } from "./terminal.ts";

describe("terminal style", () => {
  it("colours only on a terminal, never with NO_COLOR (https://no-color.org) or TERM=dumb", () => {
    expect(makeStyle({ isTTY: true }, {}).good("x")).toBe("\x1b[32mx\x1b[0m");
    expect(makeStyle({ isTTY: true }, { NO_COLOR: "1" }).good("x")).toBe("x");
    expect(makeStyle({ isTTY: true }, { TERM: "dumb" }).bad("x")).toBe("x");
    expect(makeStyle({ isTTY: false }, {}).unsure("x")).toBe("x");
  });
});
