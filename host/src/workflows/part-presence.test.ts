import { describe, expect, it } from "vitest";
import { PresenceTracker } from "./part-presence.ts";

const ring = (l: number, u = 0.1) => ({ kind: "ring" as const, inductance_h: l, inductance_u_h: u });
const open = { kind: "open" as const };

describe("part presence from the ring", () => {
  it("records a part once after two agreeing readings, then waits for the clips to open", () => {
    const t = new PresenceTracker();
    expect(t.observe(open)).toBe("wait-part");
    expect(t.observe(ring(10))).toBe("settling");
    expect(t.observe(ring(10.05))).toBe("record");
    expect(t.observe(ring(10.02))).toBe("wait-removal");
    expect(t.observe(open)).toBe("removed");
    expect(t.observe(open)).toBe("wait-part");
    expect(t.observe(ring(20))).toBe("settling");
  });

  it("keeps settling while readings disagree (a part being pushed into the clips)", () => {
    const t = new PresenceTracker({ settle: 2 });
    expect(t.observe(ring(8))).toBe("settling");
    expect(t.observe(ring(10))).toBe("settling");
    expect(t.observe(ring(10.1))).toBe("record");
  });

  it("needs `clear` open readings in a row to call the part removed", () => {
    const t = new PresenceTracker({ settle: 1, clear: 2 });
    expect(t.observe(ring(5))).toBe("record");
    expect(t.observe(open)).toBe("wait-removal");
    expect(t.observe(ring(5))).toBe("wait-removal");
    expect(t.observe(open)).toBe("wait-removal");
    expect(t.observe(open)).toBe("removed");
  });

  it("waits for the removal of a part that cannot be read", () => {
    const t = new PresenceTracker();
    expect(t.observe({ kind: "unreadable", code: "NO_SAFE_SETTING" })).toBe("wait-removal");
    expect(t.observe(open)).toBe("removed");
  });
});
