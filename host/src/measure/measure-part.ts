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

export interface MeasureOptions {
  /** Fixed drive-resistor index; with `tank`, skips ranging. */
  drive?: number;
  tank?: number;
  charge_us?: number;
  /** Lower the ring-peak limit (never raised above the default). */
  max_peak_v?: number;
  label?: string;
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

  let settings: MeasureSettings;
  let prediction: SettingPrediction | undefined;
  if (opts.drive !== undefined || opts.tank !== undefined) {
    const drive = opts.drive ?? 0;
    const tank = opts.tank ?? profile.tanks.length - 1;
    checkIndex("drive", drive, profile.drives.length);
    checkIndex("tank", tank, profile.tanks.length);
    const charge = opts.charge_us ?? Math.min(profile.drives[drive].max_charge_us, 1000);
    settings = fullSettings(client, drive, tank, charge, PROBE_QUIET_US, PROBE_TIMEOUT_MS);
  } else {
    prediction = await chooseSetting(client, limits, progress);
    const p = prediction;
    const period_us = 1e6 / p.f_hz;
    const quiet = Math.max(50, Math.ceil(4 * period_us));
    const ring_ms = (p.usable_edges / 2) * period_us * 1e-3;
    const timeout = Math.min(profile.max_timeout_ms, Math.ceil(3 * ring_ms + quiet / 1000 + 20));
    settings = fullSettings(client, p.drive, p.tank, p.charge_us, quiet, timeout);
  }
  progress(`measuring: ${describeSetting(client, settings)}`);
  const raw = await client.measure(settings);
  const capture = captureFromDevice(raw, client.identity, profile, client.transport.description, opts.label);
  const analysis = analyzeCapture(capture);
  return { capture, analysis, settings, prediction };
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

async function chooseSetting(client: DeviceClient, limits: PlanLimits, progress: (m: string) => void): Promise<SettingPrediction> {
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
      throw new MeasureError("NO_SAFE_SETTING", `no setting suits this part (~${(est.l_h * 1e6).toPrecision(3)} µH): ${best.refused}; measure it with a fixed --drive/--tank if you know it is safe`);
    }
    return best;
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
