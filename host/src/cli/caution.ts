// The one caution a command that pulses a part prints on stderr (short; stronger when the part
// looks like a transformer winding or a ring is predicted high), and the --winding-ratio option.

import type { SettingPrediction } from "../ranging/predict.ts";
import { type PeakLimitCheck, volts } from "../ranging/safety.ts";
import { CliUsageError } from "./errors.ts";

/**
 * `--winding-ratio`: other turns per pulsed turn, as a number (`19`, `0.5`) or as the two
 * windings' voltages or turns, the other winding first (`230:12`, `230/12`; a pair below 1 is refused).
 */
export function windingRatioOption(v: string | undefined): number | undefined {
  if (v === undefined) return undefined;
  const t = v.trim();
  const pair = /^(\d+(?:\.\d+)?)\s*[:/]\s*(\d+(?:\.\d+)?)$/.exec(t);
  const n = pair ? Number(pair[1]) / Number(pair[2]) : /^\d+(?:\.\d+)?$/.test(t) ? Number(t) : NaN;
  if (!(n > 0) || !Number.isFinite(n) || n > 10_000) {
    throw new CliUsageError(`--winding-ratio is the other winding's turns per pulsed turn, e.g. 19 or 230:12 (mains : pulsed winding), got ${JSON.stringify(v)}`);
  }
  // Written as a pair, the larger figure first is the step-up the caution is about: a pair the
  // other way round is most often the same transformer named from the pulsed side (12:230 for a
  // 230 V : 12 V one), and read as written it would lift the cap altogether. A step-down (the
  // high-voltage winding pulsed) is given as a plain number.
  if (pair && n < 1) {
    throw new CliUsageError(
      `--winding-ratio ${t} says the other winding has fewer turns than the pulsed one (${Number(n.toPrecision(3))}×), which would leave ranging uncapped. ` +
        `Write the other winding first: pulsing the 12 V side of a 230 V : 12 V transformer is --winding-ratio 230:12. ` +
        `If the pulsed winding really is the high-voltage one, give the ratio as a plain number (--winding-ratio ${Number(n.toPrecision(3))})`,
    );
  }
  return Number(n.toPrecision(4));
}

/** Rings predicted at or above this are cautioned as high: a turns ratio above 4.2 would put the other winding past 42.4 V. */
export const HIGH_RING_V = 10;

const TRANSFORMER_WORDS = /\b(transformers?|xfmr|mains|primary|secondary)\b/i;

export interface CautionContext {
  /** Names and text that describe the part (scenario name and story, --label). */
  describe: (string | undefined)[];
  limit: PeakLimitCheck;
  /** --json / --csv: the short caution is left out, a strong one is still printed. */
  quiet: boolean;
  /** Sessions (sort, wind, watch) pulse every part again and again. */
  repeated?: boolean;
  write?: (text: string) => void;
}

/**
 * One caution per command that pulses a part: short at the start, or strong when the part is
 * described as a transformer winding; if a pulse is then predicted to ring high, the strong
 * caution follows once (unless already given).
 */
export class PulseCaution {
  private strongGiven = false;
  private readonly write: (text: string) => void;

  constructor(private readonly ctx: CautionContext) {
    this.write = ctx.write ?? ((t) => process.stderr.write(t));
  }

  /** Before the first pulse. */
  start(): void {
    const looksTransformer = this.ctx.describe.some((d) => d !== undefined && TRANSFORMER_WORDS.test(d));
    const { limit } = this.ctx;
    if (limit.other_winding_ratio !== undefined && limit.other_winding_ratio > 1) {
      this.strongGiven = true;
      this.line(`caution: transformer winding: every pulse is kept under ${volts(limit.limit_v)} so the other winding (${limit.other_winding_ratio}× the pulse) stays under ${volts(limit.winding_limit_v)}; still keep clear of every winding`);
    } else if (looksTransformer) {
      this.strongGiven = true;
      this.line(
        `CAUTION: this part looks like a transformer winding. Its other winding sees the pulse times the turns ratio ` +
          `(a 10 V ring on the 12 V side of a 230 V : 12 V transformer is about 190 V on the mains side). ` +
          `Give --winding-ratio N (e.g. 230:12) so ranging keeps that winding under ${volts(limit.limit_v)}; keep clear of every winding; ` +
          `follow local codes and leave mains equipment to licensed practice.`,
      );
    } else if (!this.ctx.quiet) {
      const what = this.ctx.repeated ? "every part is pulsed repeatedly while on the clips" : "the part is pulsed";
      this.line(`caution: ${what} (ring up to ${volts(limit.limit_v)} peak): unpowered, discharged parts only, fingers off the clips and any other winding (henrytick --help, Safety)`);
    }
  }

  /** Before each pulse, with its prediction (MeasureOptions.onBeforePulse). */
  beforePulse = (p: SettingPrediction): void => {
    if (this.strongGiven || p.peak_v < HIGH_RING_V) return;
    this.strongGiven = true;
    this.line(
      `CAUTION: the next pulse is predicted to ring at about ${volts(p.peak_v)} peak. If this part has another winding, it sees that times the turns ratio ` +
        `(${volts(p.peak_v * 19)} at 19×): stop (Ctrl-C) and give --winding-ratio N; keep clear of the part while it is pulsed.`,
    );
  };

  private line(text: string): void {
    this.write(`   ${text}\n`);
  }
}
