// Scenario files: every shipped one loads; malformed ones are refused with the field named.

import { describe, expect, it } from "vitest";
import { listScenarios, loadScenario, validateScenario, ScenarioError } from "./scenario.ts";

const good = {
  format: "henrytick-scenario",
  version: 1,
  name: "t",
  part: { inductance_h: 1e-3, series_ohm: 1, self_capacitance_f: 1e-12 },
};

describe("scenarios", () => {
  it.each(listScenarios())("loads the shipped scenario %s", (name) => {
    const s = loadScenario(name);
    expect(s.name).toBe(name);
    expect(s.part.inductance_h).toBeGreaterThan(0);
  });

  it.each([
    [{ ...good, format: "x" }, "format"],
    [{ ...good, version: 2 }, "version"],
    [{ ...good, name: "" }, "name"],
    [{ ...good, part: null }, "part"],
    [{ ...good, part: { ...good.part, inductance_h: -1 } }, "part.inductance_h"],
    [{ ...good, part: { ...good.part, inductance_h: "1m" } }, "part.inductance_h"],
    [{ ...good, part: { series_ohm: 1 } }, "part.inductance_h"],
    [{ ...good, part: { ...good.part, series_ohm: 0 } }, "part.series_ohm"],
    [{ ...good, part: { ...good.part, parallel_ohm: Number.NaN } }, "part.parallel_ohm"],
    [{ ...good, part: { ...good.part, saturation_floor_ratio: 1.5 } }, "part.saturation_floor_ratio"],
    [{ ...good, fixture: [] }, "fixture"],
    [{ ...good, fixture: { capacitance_f: -1e-12 } }, "fixture.capacitance_f"],
    [{ ...good, seed: 1.5 }, "seed"],
    [[], "(root)"],
  ])("refuses %j naming %s", (raw, field) => {
    let err: unknown;
    try {
      validateScenario(raw);
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(ScenarioError);
    expect((err as ScenarioError).field).toBe(field);
    expect((err as Error).message).toContain(`"${field}"`);
  });

  it("names the shipped scenarios when a name is unknown", () => {
    expect(() => loadScenario("no-such-part")).toThrow(/drawer-choke-330u/);
  });
});
