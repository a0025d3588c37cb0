// One setting through a session of readings (measure --watch, a part in sort): Q and ESR depend on
// the frequency, and the frequency on the tank, so readings that hop between tanks cannot be
// compared. The first reading is ranged (automatically, or for an asked test frequency) and its
// drive and tank are kept for the readings after it; they are still checked against the limits
// before every pulse. The hold is let go, and ranging runs again, when the part changes (it comes
// off the clips, or its inductance moves by more than a different part would need) or when a
// reading on the held setting is refused for a cause another setting can fix; the reading says so.

import { formatSi } from "../format/si.ts";
import type { DeviceClient } from "../device/client.ts";
import { MeasureError, measurePart, type MeasureOptions, type Reading } from "../measure/measure-part.ts";

/** The held setting and the reading it was chosen on. */
export interface HeldSetting {
  drive: number;
  tank: number;
  inductance_h: number;
  f0_hz: number;
}

/** A reading on the held setting (or ranged), and why the setting changed when it did. */
export interface HeldReading {
  reading?: Reading;
  error?: MeasureError;
  /** Set when this reading is on another setting than the one held before it: why. */
  changed?: string;
}

/**
 * Refusals on a held setting that another setting can fix: the part now needs a gentler or
 * stronger pulse (over a limit, too few edges, a core driven into saturation, a clipped first
 * cycle, a ring longer than the window). Not: open clips, a short, a chattering fixture.
 */
const FIXABLE = new Set(["SETTING_UNSAFE", "CHARGE_LIMIT", "EMPTY_CAPTURE", "TOO_FEW_EDGES", "CORE_SATURATING", "FIRST_CYCLE_CLIPPED", "RING_OUTLASTS_WINDOW"]);

/** Inductance change beyond which the part on the clips is taken for another part. */
export const PART_CHANGE_REL = 0.25;

export class SettingHold {
  private current: HeldSetting | null = null;

  /** The setting readings are held on, or null while the next reading ranges. */
  get held(): HeldSetting | null {
    return this.current;
  }

  /** Lets go of the setting: the next reading ranges (a new part, clips open). */
  release(): void {
    this.current = null;
  }

  /**
   * One reading: on the held setting when there is one, ranged otherwise; a refusal another
   * setting can fix, or a reading that shows another part, ranges again at once.
   */
  async measure(client: DeviceClient, opts: MeasureOptions): Promise<HeldReading> {
    const before = this.current;
    if (!before) return this.ranged(client, opts, undefined);
    let reading: Reading;
    try {
      reading = await measurePart(client, { ...opts, drive: before.drive, tank: before.tank });
    } catch (e) {
      if (!(e instanceof MeasureError)) throw e;
      if (!FIXABLE.has(e.code)) {
        // Open clips end the part: the next part ranges afresh.
        if (e.code === "NO_RING") this.release();
        return { error: e };
      }
      this.release();
      return this.ranged(client, opts, `the held ${this.name(client, before)} was refused (${e.code})`);
    }
    const moved = reading.analysis.inductance_h / before.inductance_h - 1;
    if (Math.abs(moved) > PART_CHANGE_REL) {
      this.release();
      return this.ranged(client, opts, `another part: L ${formatSi(before.inductance_h, "H", 3)} → ${formatSi(reading.analysis.inductance_h, "H", 3)} on the held ${this.name(client, before)}`);
    }
    return { reading };
  }

  private async ranged(client: DeviceClient, opts: MeasureOptions, why: string | undefined): Promise<HeldReading> {
    let reading: Reading;
    try {
      reading = await measurePart(client, opts);
    } catch (e) {
      if (!(e instanceof MeasureError)) throw e;
      return { error: e, ...(why ? { changed: `${why}; ranging again found no reading` } : {}) };
    }
    const s = reading.settings;
    this.current = { drive: s.drive, tank: s.tank, inductance_h: reading.analysis.inductance_h, f0_hz: reading.analysis.f0_hz };
    return { reading, ...(why ? { changed: `${why}; ranging again chose the ${this.name(client, this.current)} (${formatSi(reading.analysis.f0_hz, "Hz", 3)})` } : {}) };
  }

  private name(client: DeviceClient, s: { drive: number; tank: number }): string {
    const p = client.profile;
    return `setting ${formatSi(p.drives[s.drive].ohm, "Ω", 3)} with ${formatSi(p.tanks[s.tank].nominal_f, "F", 3)}`;
  }
}
