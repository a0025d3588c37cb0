// One reading of the part on the clips: pick a setting (or use the caller's), pulse, verify the
// capture and analyse it. Ranging here is first-order: a gentle probe (largest tank, weakest
// drive first, stepping up the current tenfold at a time only while nothing rings), then the
// setting that the range plan predicts gives the most usable edges within the limits.

import type { RingAnalysis } from "../analysis/index.ts";
import { AnalysisError, analyzeRing } from "../analysis/index.ts";
import type { CaptureV1 } from "../capture/capture-file.ts";
import type { DeviceClient, MeasureSettings } from "../device/client.ts";
import type { RawCapture } from "../device/stream-reader.ts";
import type { PlanLimits, SettingPrediction } from "../ranging/range-plan.ts";
import { defaultLimits, estimateFromProbe, rankSettings } from "../ranging/range-plan.ts";
import { formatSi } from "../format/si.ts";
import { captureFromDevice, ringInputFromCapture } from "./capture-build.ts";
import type { AppliedCalibration } from "./capture-build.ts";

export interface MeasureOptions {
  /** Fixed drive-resistor index; with `tank`, skips ranging. */
  drive?: number;
  tank?: number;
  charge_us?: number;
  /** Lower the ring-peak limit (never raised above the default). */
  max_peak_v?: number;
  label?: string;
  /** Applied to every capture of this reading (see calibration/); nominal values without it. */
  calibration?: AppliedCalibration;
  onProgress?: (message: string) => void;
}

export interface Reading {
  capture: CaptureV1;
  analysis: RingAnalysis;
  settings: MeasureSettings;
  /** The range plan's prediction for the chosen setting (auto ranging only). */
  prediction?: SettingPrediction;
}

export class MeasureError extends Error {
  constructor(readonly code: string, message: string) {
    super(message);
    this.name = "MeasureError";
  }
}

const PROBE_CHARGE_US = 5000;
const PROBE_QUIET_US = 20000;
const PROBE_TIMEOUT_MS = 1000;

export async function measurePart(client: DeviceClient, opts: MeasureOptions = {}): Promise<Reading> {
  const progress = opts.onProgress ?? (() => {});
  const profile = client.profile;
  const limits: PlanLimits = defaultLimits(profile);
  if (opts.max_peak_v !== undefined) limits.max_peak_v = Math.min(limits.max_peak_v, opts.max_peak_v);

  if (opts.drive !== undefined || opts.tank !== undefined) {
    const drive = opts.drive ?? 0;
    const tank = opts.tank ?? profile.tanks.length - 1;
    checkIndex("drive", drive, profile.drives.length);
    checkIndex("tank", tank, profile.tanks.length);
    const charge = opts.charge_us ?? Math.min(profile.drives[drive].max_charge_us, 1000);
    const settings = fullSettings(client, drive, tank, charge, PROBE_QUIET_US, PROBE_TIMEOUT_MS);
    return readOnce(client, settings, opts, progress);
  }
  // The plan is first-order: if its best setting gives too short a ring, try the next ones.
  const ranked = await rankAfterProbe(client, limits, progress);
  let lastError: unknown;
  for (const p of ranked.slice(0, MAX_SETTINGS_TRIED)) {
    const period_us = 1e6 / p.f_hz;
    const quiet = Math.max(50, Math.ceil(4 * period_us));
    const ring_ms = (Math.max(p.usable_edges, 40) / 2) * period_us * 1e-3;
    const timeout = Math.min(profile.max_timeout_ms, Math.ceil(3 * ring_ms + quiet / 1000 + 20));
    const settings = fullSettings(client, p.drive, p.tank, p.charge_us, quiet, timeout);
    try {
      const reading = await readOnce(client, settings, opts, progress);
      if (reading.analysis.edges_used >= MIN_EDGES_AUTO || p === ranked[ranked.length - 1]) return { ...reading, prediction: p };
      lastError = new MeasureError("TOO_FEW_EDGES", `only ${reading.analysis.edges_used} edges on the best setting found`);
    } catch (e) {
      if (!(e instanceof MeasureError) || !RETRYABLE.has(e.code)) throw e;
      lastError = e;
    }
    progress("ring shorter than planned; trying the next setting");
  }
  throw lastError;
}

/** Fewest edges an automatically ranged reading should rest on before another setting is tried. */
const MIN_EDGES_AUTO = 20;
const MAX_SETTINGS_TRIED = 4;
/** Analysis failures that another setting may cure. */
const RETRYABLE = new Set(["TOO_FEW_EDGES", "NO_RING"]);

async function readOnce(client: DeviceClient, settings: MeasureSettings, opts: MeasureOptions, progress: (m: string) => void): Promise<Reading> {
  progress(`measuring: ${describeSetting(client, settings)}`);
  const raw = await client.measure(settings);
  const capture = captureFromDevice(raw, client.identity, client.profile, client.transport.description, opts.label, opts.calibration);
  return { capture, analysis: analyzeCapture(capture), settings };
}

/** Analysis of a capture, with ring-level failures turned into a user-facing MeasureError. */
export function analyzeCapture(capture: CaptureV1): RingAnalysis {
  try {
    return analyzeRing(ringInputFromCapture(capture));
  } catch (e) {
    if (e instanceof AnalysisError) throw new MeasureError(e.code, e.message);
    throw e;
  }
}

/** Probes gently, then returns the allowed settings best first (throws if none is allowed). */
async function rankAfterProbe(client: DeviceClient, limits: PlanLimits, progress: (m: string) => void): Promise<SettingPrediction[]> {
  const profile = client.profile;
  const tank = profile.tanks.length - 1; // largest capacitance: lowest ring voltage for any current
  // Weakest drive first (largest resistor); step the current up only while nothing rings.
  const order = profile.drives.map((d) => d.index).sort((a, b) => profile.drives[b].ohm - profile.drives[a].ohm);
  for (const drive of order) {
    const charge = Math.min(PROBE_CHARGE_US, profile.drives[drive].max_charge_us);
    const s = fullSettings(client, drive, tank, charge, PROBE_QUIET_US, PROBE_TIMEOUT_MS);
    progress(`probing: ${describeSetting(client, s)}`);
    const raw: RawCapture = await client.measure(s);
    const est = estimateFromProbe(profile, drive, tank, charge, raw.ticks, raw.levels);
    if (!est) continue;
    const ranked = rankSettings(profile, est, limits);
    const best = ranked[0];
    if (best.refused) {
      throw new MeasureError("NO_SAFE_SETTING", `no setting suits this part (~${formatSi(est.l_h, "H", 3)}): ${best.refused}; measure it with a fixed --drive/--tank if you know it is safe`);
    }
    return ranked.filter((p) => p.refused === "");
  }
  throw new MeasureError(
    "NO_RING",
    "nothing rang at any drive current: the clips may be open, the part may be a resistor rather than an inductor, or it is far outside 1 µH–1 H; check the connection and measure again",
  );
}

function fullSettings(client: DeviceClient, drive: number, tank: number, charge_us: number, quiet_us: number, timeout_ms: number): MeasureSettings {
  return { drive, tank, charge_us, edge_limit: client.profile.buffer_edges, timeout_ms, quiet_us };
}

function checkIndex(name: string, v: number, n: number): void {
  if (!Number.isInteger(v) || v < 0 || v >= n) {
    throw new RangeError(`"${name}" must be an index from 0 to ${n - 1} (see "henrytick profile")`);
  }
}

export function describeSetting(client: DeviceClient, s: MeasureSettings): string {
  const r = client.profile.drives[s.drive].ohm;
  const c = client.profile.tanks[s.tank].nominal_f;
  return `drive ${formatSi(r, "Ω", 3)}, tank ${formatSi(c, "F", 3)}, charge ${s.charge_us} µs`;
}
