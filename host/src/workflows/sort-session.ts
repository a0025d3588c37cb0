// A sorting session: each measured part classified against the tolerance with ISO 14253-1
// guard bands (conformity.ts), placed in the user's bins, added to the running statistics and
// the tally. Pure: the caller supplies the time and the reading; no I/O, no clock.

import type { ResultJson } from "../measure/result.ts";
import { nearestPreferred, type SeriesName } from "../values/e-series.ts";
import type { Limits, Tolerance } from "../values/tolerance.ts";
import { toleranceLimits } from "../values/tolerance.ts";
import { binOf, type BinSpec } from "./bins.ts";
import { decideConformity, roundProbability, type Decision } from "./conformity.ts";
import { RunningStats, type StatsSummary } from "./running-stats.ts";

export interface SortSpec {
  nominal_h: number;
  tolerance: Tolerance;
  lot?: string;
  bins?: BinSpec;
  /** Report each part's nearest preferred value in this series. */
  series?: SeriesName;
}

/** One line of the log: everything needed to audit the decision later. */
export interface PartRecord {
  part: number;
  time: string;
  lot: string;
  label: string;
  inductance_h: number;
  inductance_u_h: number;
  decision: Decision;
  /** Probability of conformance, to the digits it carries (roundProbability). */
  p_conform: number;
  lower_h: number;
  upper_h: number;
  bin: string;
  bin_certain: boolean | null;
  preferred_h: number | null;
  q: number;
  esr_ohm: number;
  /** Warning codes of the reading, as in measure --json (the CSV log writes them space-separated in one cell). */
  warnings: string[];
  drive_index: number | null;
  tank_index: number | null;
  charge_us: number | null;
  tank_c_f: number;
  tank_calibrated: boolean;
}

export interface Tally {
  conforming: number;
  nonconforming: number;
  inconclusive: number;
  bins: Record<string, number>;
}

export class SortSession {
  readonly limits: Limits;
  private readonly stats = new RunningStats();
  private readonly records: PartRecord[] = [];
  readonly tally: Tally;

  constructor(readonly spec: SortSpec) {
    if (!(spec.nominal_h > 0) || !Number.isFinite(spec.nominal_h)) throw new RangeError(`nominal must be a positive inductance, got ${spec.nominal_h}`);
    this.limits = toleranceLimits(spec.nominal_h, spec.tolerance);
    this.tally = { conforming: 0, nonconforming: 0, inconclusive: 0, bins: {} };
    for (const name of spec.bins?.names ?? []) this.tally.bins[name] = 0;
  }

  /** Classifies one reading; `time` is an ISO 8601 string from the caller's clock. */
  add(result: ResultJson, time: string, label?: string): PartRecord {
    const L = result.inductance_h;
    const U = result.inductance_u_h;
    const c = decideConformity(L, U, this.limits, result.coverage_factor);
    const bin = this.spec.bins ? binOf(this.spec.bins, L, U) : null;
    const range = result.settings.range;
    const rec: PartRecord = {
      part: this.records.length + 1,
      time,
      lot: this.spec.lot ?? "",
      label: label ?? result.label ?? "",
      inductance_h: L,
      inductance_u_h: U,
      decision: c.decision,
      p_conform: roundProbability(c.p_conform),
      lower_h: this.limits.lower,
      upper_h: this.limits.upper,
      bin: bin?.name ?? "",
      bin_certain: bin ? bin.certain : null,
      preferred_h: this.spec.series ? nearestPreferred(L, this.spec.series).value : null,
      q: result.q,
      esr_ohm: result.esr_ohm,
      warnings: result.warnings.map((w) => w.code),
      drive_index: range?.drive_index ?? null,
      tank_index: range?.tank_index ?? null,
      charge_us: range?.charge_us ?? null,
      tank_c_f: result.settings.tank_c_f,
      tank_calibrated: result.settings.calibration?.tank_calibrated ?? false,
    };
    this.records.push(rec);
    this.stats.add(L);
    this.tally[c.decision]++;
    if (bin) this.tally.bins[bin.name] = (this.tally.bins[bin.name] ?? 0) + 1;
    return rec;
  }

  get parts(): readonly PartRecord[] {
    return this.records;
  }

  summary(): { tally: Tally; stats: StatsSummary; limits: Limits; nominal_h: number } {
    return { tally: this.tally, stats: this.stats.summary(this.limits), limits: this.limits, nominal_h: this.spec.nominal_h };
  }
}
