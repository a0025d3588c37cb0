// Capture file v1 (docs/capture-format.md): the edge record of one ring-down with everything
// needed to analyse it again later. Written by `measure --save`, read by `analyze`.

import { CodedError } from "../coded-error.ts";
import { writeFileAtomic } from "../fs/atomic-write.ts";
import { BoundedReadError, readTextBounded } from "../fs/read-bounded.ts";
import { schemaProblem } from "../schemas.ts";
import type { Warning } from "../analysis/types.ts";

export const CAPTURE_FORMAT = "henrytick-capture";
export const CAPTURE_VERSION = 1;
/** The most edges a capture holds: eight times the reference board's 8 192-edge buffer. */
export const MAX_CAPTURE_EDGES = 65_536;
/**
 * The largest capture file read: MAX_CAPTURE_EDGES edges of up to 24 characters ("[9007199254740991,1],")
 * plus 1 MiB for the other fields.
 */
export const MAX_CAPTURE_BYTES = 24 * MAX_CAPTURE_EDGES + (1 << 20);

export interface CaptureV1 {
  format: typeof CAPTURE_FORMAT;
  version: 1;
  tick_hz: number;
  /** [tick, level]: ticks since the switch opened; level 1 after a rising edge. */
  edges: [number, number][];
  /** Capacitance across the part during the ring (nominal or calibrated). */
  tank_c_f: number;
  /** Standard uncertainty of tank_c_f. */
  tank_c_u_f?: number;
  /** [rising, falling] comparator thresholds referred to the ring voltage. */
  thresholds_v: [number, number];
  /** Drive supply and resistor, and the front end's clamp voltage (the ring's ceiling). */
  drive?: { supply_v: number; series_ohm: number; clamp_v?: number };
  range?: { drive_index: number; tank_index: number; charge_us: number; edge_limit: number; timeout_ms: number; quiet_us: number };
  /** The tester; `clamp_v` and `max_timeout_ms` (its profile's) let a saved capture be judged for part faults as the reading was. */
  device?: { id: string; firmware_version: string; protocol_version: number; transport: string; clamp_v?: number; max_timeout_ms?: number };
  /** Warnings the reading added to the analysis's own (automatic ranging's), so that a re-analysis gives them too. */
  reading_warnings?: Warning[];
  meta?: { label?: string; time?: string; end_reason?: string; [k: string]: unknown };
  /** Which values the capture's tank_c_f, thresholds_v and tick_hz came from. */
  calibration?: {
    source: string; tank_calibrated: boolean; nominal_tank_c_f: number; nominal_tick_hz: number; timebase_ppm: number; timebase_u_ppm?: number;
    /** The leads' series inductance subtracted from the ring's (calibrate short), and its standard uncertainty. */
    lead_inductance_h?: number; lead_u_h?: number;
    /** The fixture's capacitance added to tank_c_f (calibrate open) and its standard uncertainty. */
    fixture_capacitance_f?: number; fixture_u_f?: number;
    /** The comparator's calibrated rise/fall delay skew and its standard uncertainty, seconds. */
    comparator_skew_s?: number; comparator_skew_u_s?: number;
  };
  /**
   * The comparator timing the reading applied (docs/method.md §2a): the skew prior (calibrated,
   * else the board profile's), the board's input noise and overdrive charge. A re-analysis
   * applies exactly these; absent (older files, older firmware): the calibrated skew alone.
   */
  comparator?: CaptureComparator;
  [extra: string]: unknown;
}

/** A capture's comparator record (capture.schema.json, $defs/comparator). */
export interface CaptureComparator {
  skew_s: number;
  skew_u_s: number;
  skew_source: "calibration" | "board profile";
  noise_bw_hz?: number;
  noise_v?: number;
  /** Which noise the first-passage correction uses: the board's (or the fit's, if larger), or the fit's alone. */
  noise_source?: "board profile" | "fit";
  overdrive_v_s?: number;
  overdrive_u_v_s?: number;
}

export class CaptureFileError extends CodedError<"BAD_CAPTURE_FILE"> {
  constructor(message: string) {
    super("BAD_CAPTURE_FILE", message);
  }
}

function fail(where: string, what: string): never {
  throw new CaptureFileError(`capture ${where}: ${what}`);
}

/**
 * Checks a parsed object against capture v1 (its shape by schemas/capture.schema.json, then the
 * rules a schema cannot state); throws CaptureFileError naming the first problem.
 */
export function validateCapture(raw: unknown): CaptureV1 {
  if (typeof raw !== "object" || raw === null || Array.isArray(raw)) fail("file", "is not a JSON object");
  const o = raw as Record<string, unknown>;
  if (o.format !== CAPTURE_FORMAT) fail('field "format"', `must be "${CAPTURE_FORMAT}", got ${JSON.stringify(o.format)}`);
  if (o.version !== CAPTURE_VERSION) {
    fail('field "version"', `version ${JSON.stringify(o.version)} is not supported; this henrytick reads version ${CAPTURE_VERSION} (update henrytick to read newer files)`);
  }
  if (Array.isArray(o.edges) && o.edges.length > MAX_CAPTURE_EDGES) {
    fail('field "edges"', `holds ${o.edges.length} edges, more than a capture holds (at most ${MAX_CAPTURE_EDGES})`);
  }
  const problem = schemaProblem("capture", raw);
  if (problem) {
    // An edge's parts by name: "edges[12]: tick must be ...", "edges[12]: level must be ...".
    const edge = /^(edges\[\d+\])(?:\[([01])\])?$/.exec(problem.field);
    if (edge) fail(edge[1], `${edge[2] === undefined ? "" : edge[2] === "0" ? "tick " : "level "}${problem.message.replace(/^must be one of 0, 1\b/, "must be 0 or 1")}`);
    fail(`field "${problem.field}"`, problem.message);
  }
  const th = o.thresholds_v as [number, number];
  if (!(th[0] > th[1])) fail('field "thresholds_v"', "rising threshold must be above the falling one");
  const edges = o.edges as [number, number][];
  let prev = -1;
  for (let i = 0; i < edges.length; i++) {
    const t = edges[i][0];
    if (t < prev) fail(`edges[${i}]`, `tick ${t} is earlier than the previous edge (${prev})`);
    prev = t;
  }
  return o as CaptureV1;
}

export function parseCapture(text: string): CaptureV1 {
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (e) {
    fail("file", `is not valid JSON (${(e as Error).message})`);
  }
  return validateCapture(raw);
}

/** A capture file's text: a regular file of at most MAX_CAPTURE_BYTES (fs/read-bounded.ts). */
function readBounded(path: string): string {
  try {
    return readTextBounded(path, MAX_CAPTURE_BYTES);
  } catch (e) {
    if (!(e instanceof BoundedReadError)) throw e;
    const r = e.refusal;
    switch (r.kind) {
      case "open": throw new CaptureFileError(`cannot read ${path}: ${r.code}; check the path and its permissions`);
      case "not-regular": throw new CaptureFileError(`${path} is ${r.what}, not a capture file; give the path of a capture file a measurement saved`);
      case "too-large": throw new CaptureFileError(`${path} is ${r.size} bytes, more than a capture file can be (at most ${MAX_CAPTURE_BYTES} bytes for ${MAX_CAPTURE_EDGES} edges); it is not a capture file`);
      case "grew": throw new CaptureFileError(`${path} grew while being read (over ${r.size} bytes); read it again once it is written`);
      default: throw new CaptureFileError(`cannot read ${path}: ${r.code}`);
    }
  }
}

export function readCaptureFile(path: string): CaptureV1 {
  const text = readBounded(path);
  try {
    return parseCapture(text);
  } catch (e) {
    if (e instanceof CaptureFileError) throw new CaptureFileError(`${path}: ${e.message}`);
    throw e;
  }
}

/** Compact JSON: one edge pair per array element, no indentation inside the edge list. */
export function serializeCapture(c: CaptureV1): string {
  const { edges, ...rest } = c;
  const head = JSON.stringify(rest, null, 2);
  const edgeText = edges.map((e) => `[${e[0]},${e[1]}]`).join(",");
  return `${head.slice(0, -2)},\n  "edges": [${edgeText}]\n}\n`;
}

/** Writes atomically (fs/atomic-write.ts): a reader never sees a half-written capture, and a crash keeps the old file. */
export function writeCaptureFile(path: string, c: CaptureV1): void {
  writeFileAtomic(path, serializeCapture(c));
}
