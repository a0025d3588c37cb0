// Demo scenarios built from coil geometry carry both the geometry and the part values derived
// from it. This test recomputes the part from the geometry so the two cannot drift apart, and
// checks that the scenario loader accepts the files (it ignores the extra "geometry" key).
// Each file's resistance_frequency_hz is the ring frequency the simulated tester chose for that
// coil when the file was written, so series_ohm (skin effect, no proximity effect) fits the ring.

import { readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { listScenarios, loadScenario, scenarioDir } from "../sim/scenario.ts";
import { airCoreCoil, type AirCoreCoilSpec } from "./coil-design.ts";

const GEOMETRY_KEYS = new Set([
  "turns",
  "mean_diameter_m",
  "length_m",
  "awg",
  "wire_diameter_m",
  "temperature_c",
  "resistance_frequency_hz",
]);

interface RawScenario {
  name: string;
  part: Record<string, number>;
  geometry?: Record<string, number>;
}

const raw = listScenarios().map(
  (name) => JSON.parse(readFileSync(join(scenarioDir(), name + ".json"), "utf8")) as RawScenario,
);
const withGeometry = raw.filter((s) => s.geometry !== undefined);

describe("geometry-built demo scenarios", () => {
  it("include at least three air-core coils", () => {
    expect(withGeometry.map((s) => s.name)).toEqual(
      expect.arrayContaining(["tank-coil-4u4", "crossover-coil-165u", "crystal-set-coil-300u"]),
    );
  });

  for (const s of withGeometry) {
    describe(s.name, () => {
      it("uses only geometry keys that airCoreCoil reads", () => {
        for (const key of Object.keys(s.geometry!)) expect(GEOMETRY_KEYS.has(key), key).toBe(true);
      });

      it("stores the part values its geometry gives, to 1e-6 relative", () => {
        const coil = airCoreCoil(s.geometry as unknown as AirCoreCoilSpec);
        expect(Math.abs(s.part.inductance_h / coil.inductance_h - 1)).toBeLessThan(1e-6);
        expect(Math.abs(s.part.series_ohm / coil.series_ohm - 1)).toBeLessThan(1e-6);
        expect(Math.abs(s.part.self_capacitance_f / coil.self_capacitance_f - 1)).toBeLessThan(1e-6);
        expect(s.part.parallel_ohm).toBeUndefined(); // air core: no core loss
      });

      it("loads through loadScenario with the extra geometry ignored", () => {
        const loaded = loadScenario(s.name);
        expect(loaded.part.inductance_h).toBe(s.part.inductance_h);
        expect(loaded.part.series_ohm).toBe(s.part.series_ohm);
        expect(loaded.part.self_capacitance_f).toBe(s.part.self_capacitance_f);
        expect(loaded.story.length).toBeGreaterThan(0);
      });
    });
  }
});
