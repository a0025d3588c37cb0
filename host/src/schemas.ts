// The JSON Schemas (draft 2020-12) of the project's file formats, shipped in the package under
// schemas/ for other bench applications, and the one check every reader runs against them: the
// schemas compiled by ajv into plain functions at build time (schema-validators.generated.ts,
// from scripts/build-validators.mjs), so reading a file costs no schema compile. A reader turns
// the first problem into its own coded, field-naming error; rules a schema cannot state (order
// of edges, plausibility of a calibration) stay in the reader.

import * as generated from "./schema-validators.generated.ts";

/** Schema name (file schemas/NAME.schema.json, $id urn:henrytick:schema:NAME:1). */
export type SchemaName = "capture" | "result" | "calibration-profile" | "scenario";

interface ErrorObject {
  keyword: string;
  instancePath: string;
  params: Record<string, unknown>;
  message?: string;
  data?: unknown;
  parentSchema?: { description?: string };
}
type Validator = ((data: unknown) => boolean) & { errors?: ErrorObject[] | null };

const VALIDATORS: Record<SchemaName, Validator> = {
  capture: generated.capture, result: generated.result, "calibration-profile": generated.calibrationProfile, scenario: generated.scenario,
};

/** The first way a value breaks a schema: the field in the project's notation and what is wrong. */
export interface SchemaProblem {
  /** `drive.series_ohm`, `edges[12]`, `tanks[0].u_f`; `(root)` for the value itself. */
  field: string;
  /** What is wrong and what was found, e.g. `must be a number, got "x"`. */
  message: string;
}

/** Checks a value against one of the shipped schemas; undefined when it conforms. */
export function schemaProblem(name: SchemaName, value: unknown): SchemaProblem | undefined {
  const v = VALIDATORS[name];
  if (v(value)) return undefined;
  return describe(v.errors![0]);
}

const TYPE_WORDS: Record<string, string> = {
  number: "a finite number", integer: "an integer", string: "a string", object: "an object", array: "an array", boolean: "true or false",
};

function shown(x: unknown): string {
  const s = JSON.stringify(x);
  if (s === undefined) return "nothing";
  return s.length > 60 ? `${s.slice(0, 57)}...` : s;
}

function fieldOf(pointer: string, extra?: string): string {
  const parts = pointer.split("/").slice(1).map((p) => p.replace(/~1/g, "/").replace(/~0/g, "~"));
  if (extra !== undefined) parts.push(extra);
  let out = "";
  for (const p of parts) out += /^\d+$/.test(p) ? `[${p}]` : out === "" ? p : `.${p}`;
  return out === "" ? "(root)" : out;
}

function describe(e: ErrorObject): SchemaProblem {
  const p = e.params as Record<string, unknown>;
  const got = `, got ${shown(e.data)}`;
  const described = e.parentSchema?.description;
  switch (e.keyword) {
    case "required":
      return { field: fieldOf(e.instancePath, String(p.missingProperty)), message: "is missing" };
    case "type":
      return { field: fieldOf(e.instancePath), message: `must be ${String(p.type).split(",").map((t) => TYPE_WORDS[t] ?? t).join(" or ")}${got}` };
    case "const":
      return { field: fieldOf(e.instancePath), message: `must be ${JSON.stringify(p.allowedValue)}${got}` };
    case "enum": {
      const allowed = (p.allowedValues as unknown[]).map((x) => JSON.stringify(x));
      const list = allowed.length === 2 ? `${allowed[0]} or ${allowed[1]}` : `one of ${allowed.join(", ")}`;
      return { field: fieldOf(e.instancePath), message: `must be ${list}${got}` };
    }
    case "exclusiveMinimum":
      return { field: fieldOf(e.instancePath), message: `${p.limit === 0 ? "must be positive" : `must be above ${p.limit}`}${got}` };
    case "minimum":
      return { field: fieldOf(e.instancePath), message: `${p.limit === 0 ? "must not be negative" : `must be at least ${p.limit}`}${got}` };
    case "exclusiveMaximum":
      return { field: fieldOf(e.instancePath), message: `must be below ${p.limit}${got}` };
    case "maximum":
      return { field: fieldOf(e.instancePath), message: `must be at most ${p.limit}${got}` };
    case "minLength":
      return { field: fieldOf(e.instancePath), message: p.limit === 1 ? "must be a non-empty string" : `must be at least ${p.limit} characters${got}` };
    case "minItems":
    case "maxItems":
      return { field: fieldOf(e.instancePath), message: `must be ${described ?? `an array of ${p.limit}`}${got}` };
    case "pattern":
      return { field: fieldOf(e.instancePath), message: `must be ${described ?? `text matching ${p.pattern}`}${got}` };
    default:
      return { field: fieldOf(e.instancePath), message: `${e.message ?? "is not valid"}${got}` };
  }
}
