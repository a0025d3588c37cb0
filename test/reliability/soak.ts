// Soak: many consecutive readings on simulated testers whose links are damaged at a steady rate,
// with two parts swapped on the clips between readings (as on a sorting line, so a reading that
// belongs to the previous part shows up as a wrong value). Every reading is checked against the
// simulator's truth: the verified capture must hold exactly the edges the hardware recorded, and
// L and f0 must agree with the circuit's values within the stated expanded uncertainty.
// Shared by the reliability test (a short run) and the benchmark (10 000 readings).

import { CodedError } from "../../host/src/coded-error.ts";
import { captureFromDevice } from "../../host/src/measure/capture-build.ts";
import { analyzeCapture } from "../../host/src/measure/read-once.ts";
import type { MeasureSettings } from "../../host/src/device/client.ts";
import { referenceBoard } from "../../host/src/sim/board-model.ts";
import { expectedReading } from "../../host/src/sim/front-end.ts";
import type { PartModel } from "../../host/src/sim/scenario.ts";
import type { FaultKind, FaultOptions } from "../../host/src/transport/fault-transport.ts";
import { TransportError } from "../../host/src/transport/transport.ts";
import { matchesTruth, openRig, QUICK_PART, settle, SETTING } from "./sim-rig.ts";
import type { Rig } from "./sim-rig.ts";

export const SOAK_PARTS: PartModel[] = [QUICK_PART, { inductance_h: 1.5e-3, series_ohm: 20, self_capacitance_f: 4e-12 }];
/** The ring lasts under a millisecond: a short window keeps a lost header cheap. */
export const SOAK_SETTING: MeasureSettings = { ...SETTING, timeout_ms: 50 };

export interface SoakOptions {
  measurements: number;
  /** Readings run side by side (each on its own tester), so one lane's timeout overlaps another's work. */
  lanes: number;
  seed: number;
  faults: Omit<FaultOptions, "seed" | "onReset">;
  /** Pull the cable during every n-th reading of a lane and reconnect; 0: never. */
  unplug_every: number;
  onProgress?: (done: number) => void;
}

export interface SoakReport {
  measurements: number;
  completed: number;
  failed_coded: number;
  /** Errors without a stable code (anything but the classes below): must be 0. */
  crashes: number;
  /** Readings during which at least one fault was injected. */
  faulted: number;
  /** Faulted readings the host noticed: a resend (CR) or a coded error. */
  detected: number;
  /** Faulted readings that were resent and ended with the true capture. */
  recovered: number;
  /** Faulted readings the host did not notice but whose capture was still the true one (the fault hit a line after the trailer, or only delayed lines). */
  harmless: number;
  /**
   * A result presented as valid that is not the truth: the capture differs from the recorded
   * edges, or L or f0 is off by more than twice its expanded uncertainty U (k = 2), i.e. about
   * four standard uncertainties. (An honest k = 2 interval is missed by a few per cent of good
   * readings, so U itself cannot be the line; those are counted in outside_u.)
   */
  wrong_results: number;
  /** Completed readings with L or f0 outside U (k = 2) but within 2 U: expected now and then. */
  outside_u: number;
  wrong_capture: number;
  /** Failures of readings with no fault of their own (after-effects of an earlier fault). */
  clean_failures: number;
  faults_injected: Record<FaultKind, number>;
  errors_by_code: Record<string, number>;
  /** Largest |error| / U(k = 2) over completed readings. */
  max_z_l: number;
  max_z_f0: number;
  heap_growth_bytes: number;
  /** The first few wrong results with the readings before them (index:faults:outcome:resends). */
  wrong_samples: string[];
}

/** The stable code of an error the library raises on purpose; null for anything else (a crash). */
function errorCode(e: unknown): string | null {
  return e instanceof CodedError ? e.code : null;
}

function totalInjected(r: Rig): number {
  return Object.values(r.faults.injected).reduce((a, b) => a + b, 0);
}

export async function runSoak(o: SoakOptions, heapNow: () => number = () => 0): Promise<SoakReport> {
  const board = referenceBoard();
  const expected = SOAK_PARTS.map((p) => expectedReading(board, p, SOAK_SETTING.drive, SOAK_SETTING.tank, 10e-9));
  const rep: SoakReport = {
    measurements: 0, completed: 0, failed_coded: 0, crashes: 0, faulted: 0, detected: 0, recovered: 0, harmless: 0,
    wrong_results: 0, outside_u: 0, wrong_capture: 0, clean_failures: 0, faults_injected: {} as Record<FaultKind, number>, errors_by_code: {},
    max_z_l: 0, max_z_f0: 0, heap_growth_bytes: 0, wrong_samples: [],
  };
  let heapStart = 0;
  const perLane = Math.ceil(o.measurements / o.lanes);

  async function lane(index: number): Promise<void> {
    const seed = o.seed + 7919 * index;
    let gen = 0;
    const open = async (): Promise<Rig> => {
      // Connecting over the damaged link can fail too; a user would simply try again.
      for (let attempt = 0; ; attempt++) {
        try {
          return await openRig({ seed: seed + 104729 * gen++, board, faults: attempt < 5 ? o.faults : {} });
        } catch (e) {
          if (errorCode(e) === null) throw e;
        }
      }
    };
    let rig = await open();
    const hist: string[] = [];
    const retire = (r: Rig) => {
      for (const [k, v] of Object.entries(r.faults.injected)) rep.faults_injected[k as FaultKind] = (rep.faults_injected[k as FaultKind] ?? 0) + v;
    };
    for (let i = 0; i < perLane && rep.measurements < o.measurements; i++) {
      const which = i % 2;
      rig.link.sim.part = SOAK_PARTS[which];
      const injected0 = totalInjected(rig);
      const inj0 = { ...rig.faults.injected };
      const cr0 = rig.faults.sent.CR ?? 0;
      if (o.unplug_every > 0 && i % o.unplug_every === o.unplug_every - 1) {
        const f = rig.faults;
        setImmediate(() => f.unplug());
      }
      rep.measurements++;
      let failed: unknown = undefined;
      let raw = null;
      try {
        raw = await rig.client.measure(SOAK_SETTING);
      } catch (e) {
        failed = e;
      }
      const faulted = totalInjected(rig) > injected0;
      hist.push(`${i}:${faulted ? Object.entries(rig.faults.injected).filter(([k, v]) => v !== (inj0 as Record<string, number>)[k]).map(([k]) => k).join("+") : "-"}:${failed ? errorCode(failed) : "ok"}:cr${(rig.faults.sent.CR ?? 0) - cr0}`);
      const resent = (rig.faults.sent.CR ?? 0) > cr0;
      if (faulted) rep.faulted++;
      if (failed !== undefined) {
        const code = errorCode(failed);
        if (code === null) rep.crashes++;
        else rep.failed_coded++;
        rep.errors_by_code[code ?? "UNCODED"] = (rep.errors_by_code[code ?? "UNCODED"] ?? 0) + 1;
        if (faulted) rep.detected++;
        else rep.clean_failures++;
      } else if (raw) {
        await settle();
        const truthful = matchesTruth(raw, rig.link.sim);
        if (faulted && resent) rep.detected++;
        if (faulted && resent && truthful) rep.recovered++;
        if (faulted && !resent && truthful) rep.harmless++;
        if (!truthful) rep.wrong_capture++;
        let wrong = !truthful;
        try {
          const a = analyzeCapture(captureFromDevice(raw, rig.client.identity, rig.client.profile, rig.client.transport.description));
          rep.completed++;
          const zl = Math.abs(a.inductance_h - expected[which].inductance_h) / a.inductance_u_h;
          const zf = Math.abs(a.f0_hz - expected[which].f0_hz) / a.f0_u_hz;
          rep.max_z_l = Math.max(rep.max_z_l, zl);
          rep.max_z_f0 = Math.max(rep.max_z_f0, zf);
          if (!(zl <= 2 && zf <= 2)) wrong = true;
          else if (!(zl <= 1 && zf <= 1)) rep.outside_u++;
        } catch (e) {
          const code = errorCode(e);
          if (code === null) rep.crashes++;
          else rep.failed_coded++;
          rep.errors_by_code[code ?? "UNCODED"] = (rep.errors_by_code[code ?? "UNCODED"] ?? 0) + 1;
        }
        if (wrong) rep.wrong_results++;
        if (wrong && rep.wrong_samples.length < 5) rep.wrong_samples.push(`lane ${index} reading ${i}: capture ${truthful ? "true" : "not the recorded one"}; last readings ${hist.slice(-3).join(", ")}`);
        if (hist.length > 8) hist.splice(0, hist.length - 3);
      }
      if (failed instanceof TransportError) {
        retire(rig);
        await rig.close();
        rig = await open();
      }
      if (rep.measurements === Math.min(o.measurements, 200 * o.lanes)) heapStart = heapNow();
      if (rep.measurements % 500 === 0) o.onProgress?.(rep.measurements);
    }
    retire(rig);
    await rig.close();
  }

  await Promise.all(Array.from({ length: o.lanes }, (_, k) => lane(k)));
  rep.heap_growth_bytes = heapStart > 0 ? heapNow() - heapStart : 0;
  return rep;
}

/** The steady fault mix of the soak: per received line, per write, and an unplug now and then. */
export const SOAK_FAULTS: Omit<FaultOptions, "seed" | "onReset"> = {
  rates: {
    flip_bit: 0.004, drop_byte: 0.004, duplicate_line: 0.003, reorder_lines: 0.003, stall: 0.001, reset: 0.001,
    tx_flip_bit: 0.002, tx_drop_byte: 0.002,
  },
  stall_ms: Infinity,
};
