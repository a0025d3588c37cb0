// Timebase error against the host's monotonic clock. Over a chosen duration the host reads the
// tester's free-running tick counter several times, bracketing every read with its own clock;
// the slope of ticks against host seconds, over the nominal tick rate, is 1 + ppm 1e-6.
//
// The tester reports its counter with the TK command (testerTickCounter below). The timebase
// can also be entered from an external frequency measurement, or left to cancel in a
// reference-inductor calibration.

import { CalibrationError } from "./errors.ts";

export interface TickCounter {
  /** Nominal tick rate, Hz. */
  tick_hz: number;
  /** The counter now, extended past any wrap by the caller, ticks. */
  readTicks(): Promise<number>;
}

export interface HostClock {
  /** Monotonic seconds (performance.now or process.hrtime in the CLI). */
  now_s(): number;
  sleep(seconds: number): Promise<void>;
}

export interface TickSample {
  /** Host time just before and just after the read: the tick value was latched between them. */
  before_s: number;
  after_s: number;
  ticks: number;
}

export interface TimebaseResult {
  ppm: number;
  /** Standard uncertainty, ppm. */
  u_ppm: number;
  duration_s: number;
  samples: number;
  /** Contributions, ppm: read latency and counter quantisation, host clock. */
  budget: { reads_ppm: number; host_clock_ppm: number };
}

/** Host clock rate uncertainty when NTP disciplines it: common bench practice, no source. */
export const HOST_CLOCK_U_PPM = 1;

/**
 * Pure core: weighted least-squares slope of ticks against the midpoint of each bracket. A read
 * latched anywhere in its bracket has rectangular timing uncertainty of half the bracket
 * (JCGM 100:2008 §4.3.7); one tick of quantisation adds 1/sqrt(12) tick.
 */
export function timebaseFromSamples(samples: TickSample[], tick_hz: number, host_clock_u_ppm = HOST_CLOCK_U_PPM): TimebaseResult {
  if (samples.length < 3) throw new RangeError("timebaseFromSamples needs at least three reads");
  const t = samples.map((s) => (s.before_s + s.after_s) / 2);
  const y = samples.map((s) => s.ticks / tick_hz); // tester seconds
  const var_t = samples.map((s) => ((s.after_s - s.before_s) / 2) ** 2 / 3 + 1 / (12 * tick_hz * tick_hz));
  const w = var_t.map((v) => 1 / v);
  const sw = w.reduce((a, b) => a + b, 0);
  const tm = t.reduce((a, ti, i) => a + w[i] * ti, 0) / sw;
  const ym = y.reduce((a, yi, i) => a + w[i] * yi, 0) / sw;
  let sxx = 0;
  let sxy = 0;
  for (let i = 0; i < t.length; i++) {
    sxx += w[i] * (t[i] - tm) ** 2;
    sxy += w[i] * (t[i] - tm) * (y[i] - ym);
  }
  const slope = sxy / sxx;
  const duration = t[t.length - 1] - t[0];
  if (!(duration > 0)) throw new RangeError("the reads do not span any host time");
  const reads_ppm = Math.sqrt(1 / sxx) * 1e6;
  const ppm = (slope - 1) * 1e6;
  if (Math.abs(ppm) > 1000) {
    throw new CalibrationError("NONSENSE_RESULT", `the tester's clock seems off by ${ppm.toFixed(0)} ppm: beyond any working crystal; check that the host was not suspended and measure again`);
  }
  return { ppm, u_ppm: Math.hypot(reads_ppm, host_clock_u_ppm), duration_s: duration, samples: samples.length, budget: { reads_ppm, host_clock_ppm: host_clock_u_ppm } };
}

/** Runs the procedure over `duration_s`, reading the counter `reads` times evenly spread. */
export async function measureTimebase(counter: TickCounter, clock: HostClock, duration_s: number, reads = 11, host_clock_u_ppm = HOST_CLOCK_U_PPM): Promise<TimebaseResult> {
  if (!(duration_s >= 1)) throw new RangeError(`"duration_s" must be at least 1 s, got ${duration_s}`);
  if (!Number.isInteger(reads) || reads < 3) throw new RangeError(`"reads" must be an integer >= 3, got ${reads}`);
  const samples: TickSample[] = [];
  const start = clock.now_s();
  for (let k = 0; k < reads; k++) {
    const due = start + (duration_s * k) / (reads - 1);
    const wait = due - clock.now_s();
    if (wait > 0) await clock.sleep(wait);
    const before_s = clock.now_s();
    const ticks = await counter.readTicks();
    const after_s = clock.now_s();
    samples.push({ before_s, after_s, ticks });
  }
  return timebaseFromSamples(samples, counter.tick_hz, host_clock_u_ppm);
}

/** What to say when the tester cannot report its counter. */
export function timebaseUnsupported(): CalibrationError {
  return new CalibrationError(
    "TIMEBASE_UNSUPPORTED",
    "this tester's firmware cannot report its tick counter; enter a timebase measured with a frequency counter (the profile's timebase entry, ppm and u_ppm), or rely on a reference-inductor calibration, in which the crystal's error cancels",
  );
}

/**
 * The tester's 32-bit tick counter (the TK command) as a TickCounter: reads are unwrapped by
 * assuming less than half a wrap (2^31 ticks, 33 s at 64 MHz) passes between two of them, which
 * measureTimebase guarantees by spacing its reads (see MAX_READ_SPACING_S).
 */
export function testerTickCounter(tester: { readTicks32(): Promise<number> }, tick_hz: number): TickCounter {
  let last: number | null = null;
  let wraps = 0;
  return {
    tick_hz,
    async readTicks() {
      const raw = await tester.readTicks32();
      if (last !== null && raw < last) wraps++;
      last = raw;
      return wraps * 2 ** 32 + raw;
    },
  };
}

/** Longest gap between counter reads for the unwrapping above to hold at 64 MHz, with margin. */
export const MAX_READ_SPACING_S = 20;

/** The host's monotonic clock. */
export const hostClock: HostClock = {
  now_s: () => performance.now() / 1000,
  sleep: (s) => new Promise((r) => setTimeout(r, s * 1000)),
};
