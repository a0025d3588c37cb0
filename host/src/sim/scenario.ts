// Simulated-tester scenarios: a demo part (and its bench story) in a JSON file with units in the
// keys. Malformed files are refused with the offending field named.

import type { ContactChatter } from "./fixture-chatter.ts";
import { readFileSync, readdirSync } from "node:fs";
import { basename, dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { CodedError } from "../coded-error.ts";
import { schemaProblem } from "../schemas.ts";

export interface PartModel {
  inductance_h: number;
  series_ohm: number;
  /** Core (parallel) loss resistance; absent for an air core. */
  parallel_ohm?: number;
  /** The part's own self-capacitance, in parallel with the tank. */
  self_capacitance_f: number;
  /** Core saturation: current where the differential inductance has fallen halfway to its floor. */
  saturation_current_a?: number;
  /** Differential inductance deep in saturation, as a fraction of the small-signal value. */
  saturation_floor_ratio?: number;
}

/**
 * The clips shorted to each other (calibrate short on the simulated tester): no part, only the
 * leads' own inductance (FixtureModel.lead_inductance_h) and 20 mΩ of clip contact and lead copper
 * (common bench practice, no source).
 */
export const SHORTED_CLIPS: PartModel = { inductance_h: 0, series_ohm: 0.02, self_capacitance_f: 0 };

/** Bench conditions that differ from the reference board for this scenario. */
export interface FixtureModel {
  /** Test-lead capacitance in parallel with the tank (replaces the board's). */
  capacitance_f?: number;
  /** Series inductance of the test leads and clips, in series with the part (0 when left out). */
  lead_inductance_h?: number;
  /** Tank voltage coefficient k, C(v) = C0 (1 - k v^2): a class II ceramic fitted as the tank. */
  tank_voltage_coefficient_per_v2?: number;
  /** An intermittent clip contact during the ring (sim/fixture-chatter.ts). */
  chatter?: ContactChatter;
}

export interface Scenario {
  format: "henrytick-scenario";
  version: 1;
  name: string;
  story: string;
  part: PartModel;
  fixture?: FixtureModel;
  seed: number;
}

export class ScenarioError extends CodedError<"BAD_SCENARIO"> {
  constructor(
    readonly field: string,
    message: string,
  ) {
    super("BAD_SCENARIO", `scenario field "${field}": ${message}`);
  }
}

/**
 * Checks a parsed scenario object (its shape by schemas/scenario.schema.json); throws
 * ScenarioError naming the first bad field. A missing self-capacitance reads as 0, a missing
 * story as "", a missing seed as 1.
 */
export function validateScenario(raw: unknown): Scenario {
  if (typeof raw !== "object" || raw === null || Array.isArray(raw)) throw new ScenarioError("(root)", "must be a JSON object");
  const o = raw as Record<string, unknown>;
  if (o.format === "henrytick-scenario" && o.version !== 1) throw new ScenarioError("version", `unsupported version ${JSON.stringify(o.version)}; this build reads version 1`);
  const problem = schemaProblem("scenario", raw);
  if (problem) throw new ScenarioError(problem.field, problem.message);
  const p = o.part as PartModel;
  const part: PartModel = {
    inductance_h: p.inductance_h,
    series_ohm: p.series_ohm,
    parallel_ohm: p.parallel_ohm,
    self_capacitance_f: p.self_capacitance_f ?? 0,
    saturation_current_a: p.saturation_current_a,
    saturation_floor_ratio: p.saturation_floor_ratio,
  };
  const f = o.fixture as FixtureModel | undefined;
  const fixture = f ? { capacitance_f: f.capacitance_f, ...(f.lead_inductance_h !== undefined ? { lead_inductance_h: f.lead_inductance_h } : {}), tank_voltage_coefficient_per_v2: f.tank_voltage_coefficient_per_v2, ...(f.chatter ? { chatter: f.chatter } : {}) } : undefined;
  return {
    format: "henrytick-scenario", version: 1, name: o.name as string, story: (o.story as string | undefined) ?? "", part,
    ...(fixture ? { fixture } : {}), seed: (o.seed as number | undefined) ?? 1,
  };
}

/** Folder of the demo scenarios shipped with the host package. */
export function scenarioDir(): string {
  return join(dirname(fileURLToPath(import.meta.url)), "..", "..", "scenarios");
}

export const DEFAULT_SCENARIO = "drawer-choke-330u";

export function listScenarios(): string[] {
  return readdirSync(scenarioDir())
    .filter((f) => f.endsWith(".json"))
    .map((f) => basename(f, ".json"))
    .sort();
}

/** Loads a scenario by shipped name or by file path. */
export function loadScenario(nameOrPath: string): Scenario {
  const path = nameOrPath.endsWith(".json") ? nameOrPath : join(scenarioDir(), nameOrPath + ".json");
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch {
    throw new ScenarioError("(file)", `cannot read ${path}; shipped scenarios: ${listScenarios().join(", ")}`);
  }
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (e) {
    throw new ScenarioError("(file)", `${path} is not valid JSON: ${(e as Error).message}`);
  }
  return validateScenario(raw);
}
