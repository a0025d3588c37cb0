// Simulated-tester scenarios: a demo part (and its bench story) in a JSON file with units in the
// keys. Malformed files are refused with the offending field named.

import { readFileSync, readdirSync } from "node:fs";
import { basename, dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { CodedError } from "../coded-error.ts";

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

/** Bench conditions that differ from the reference board for this scenario. */
export interface FixtureModel {
  /** Test-lead capacitance in parallel with the tank (replaces the board's). */
  capacitance_f?: number;
  /** Tank voltage coefficient k, C(v) = C0 (1 - k v^2): a class II ceramic fitted as the tank. */
  tank_voltage_coefficient_per_v2?: number;
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

function positive(obj: Record<string, unknown>, key: string, path: string, optional = false): number | undefined {
  const v = obj[key];
  if (v === undefined || v === null) {
    if (optional) return undefined;
    throw new ScenarioError(path + key, "is missing (a positive number in SI units is required)");
  }
  const zeroAllowed = key === "self_capacitance_f" || key === "capacitance_f";
  if (typeof v !== "number" || !Number.isFinite(v) || v < 0 || (v === 0 && !zeroAllowed)) {
    throw new ScenarioError(path + key, `must be a positive finite number, got ${JSON.stringify(v)}`);
  }
  return v;
}

/** Checks a parsed scenario object; throws ScenarioError naming the first bad field. */
export function validateScenario(raw: unknown): Scenario {
  if (typeof raw !== "object" || raw === null || Array.isArray(raw)) {
    throw new ScenarioError("(root)", "must be a JSON object");
  }
  const o = raw as Record<string, unknown>;
  if (o.format !== "henrytick-scenario") throw new ScenarioError("format", 'must be "henrytick-scenario"');
  if (o.version !== 1) throw new ScenarioError("version", `unsupported version ${JSON.stringify(o.version)}; this build reads version 1`);
  if (typeof o.name !== "string" || o.name.length === 0) throw new ScenarioError("name", "must be a non-empty string");
  const story = typeof o.story === "string" ? o.story : "";
  if (typeof o.part !== "object" || o.part === null) throw new ScenarioError("part", "must be an object");
  const p = o.part as Record<string, unknown>;
  const part: PartModel = {
    inductance_h: positive(p, "inductance_h", "part.")!,
    series_ohm: positive(p, "series_ohm", "part.")!,
    parallel_ohm: positive(p, "parallel_ohm", "part.", true),
    self_capacitance_f: positive(p, "self_capacitance_f", "part.", true) ?? 0,
    saturation_current_a: positive(p, "saturation_current_a", "part.", true),
    saturation_floor_ratio: positive(p, "saturation_floor_ratio", "part.", true),
  };
  if (part.saturation_floor_ratio !== undefined && part.saturation_floor_ratio >= 1) {
    throw new ScenarioError("part.saturation_floor_ratio", "must be below 1 (a fraction of the small-signal inductance)");
  }
  let fixture: FixtureModel | undefined;
  if (o.fixture !== undefined) {
    if (typeof o.fixture !== "object" || o.fixture === null || Array.isArray(o.fixture)) throw new ScenarioError("fixture", "must be an object");
    const f = o.fixture as Record<string, unknown>;
    fixture = {
      capacitance_f: positive(f, "capacitance_f", "fixture.", true),
      tank_voltage_coefficient_per_v2: positive(f, "tank_voltage_coefficient_per_v2", "fixture.", true),
    };
  }
  const seed = o.seed === undefined ? 1 : o.seed;
  if (typeof seed !== "number" || !Number.isInteger(seed)) throw new ScenarioError("seed", "must be an integer");
  return { format: "henrytick-scenario", version: 1, name: o.name, story, part, ...(fixture ? { fixture } : {}), seed };
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
