// Result JSON (docs/capture-format.md): the analysis figures with SI units in the
// key names, plus the settings and device they came from.

import type { RingAnalysis } from "../analysis/index.ts";
import type { CaptureV1 } from "../capture/capture-file.ts";
import type { PartFaultCode, WarningCode } from "../codes.ts";
import type { FrequencyChoice } from "../ranging/choose-setting.ts";
import type { Reading } from "./measure-part.ts";

export interface ResultJson {
  f0_hz: number;
  f0_u_hz: number;
  fd_hz: number;
  inductance_h: number;
  inductance_u_h: number;
  coverage_factor: 2;
  q: number;
  q_u: number;
  esr_ohm: number;
  esr_u_ohm: number;
  ring_amplitude_v: number;
  edges_used: number;
  edges_rejected: number;
  warnings: { code: WarningCode; message: string }[];
  settings: {
    tick_hz: number;
    tank_c_f: number;
    tank_c_u_f?: number;
    thresholds_v: [number, number];
    drive?: CaptureV1["drive"];
    range?: CaptureV1["range"];
    calibration?: CaptureV1["calibration"];
    /** The comparator timing the analysis applied (capture `comparator`). */
    comparator?: CaptureV1["comparator"];
  };
  device?: CaptureV1["device"];
  label?: string;
  /**
   * Present only for a reading kept on request (measure keep_suspect / --keep-suspect) although it
   * shows a part fault: the fault's code and message. Such a reading is not a verified result.
   */
  suspect?: { code: PartFaultCode; message: string };
  /** Present only when a test frequency was asked for: how near the reading came (ranging/choose-setting.ts). */
  test_frequency?: FrequencyChoice;
}

/** The result of a reading taken here: the capture's figures plus what only the reading knows (suspect, test frequency). */
export function readingResult(r: Reading): ResultJson {
  const result = buildResult(r.analysis, r.capture, r.suspect);
  return r.test_frequency ? { ...result, test_frequency: r.test_frequency } : result;
}

export function buildResult(a: RingAnalysis, c: CaptureV1, suspect?: { code: PartFaultCode; message: string }): ResultJson {
  return {
    ...(suspect ? { suspect: { code: suspect.code, message: suspect.message } } : {}),
    f0_hz: a.f0_hz,
    f0_u_hz: a.f0_u_hz,
    fd_hz: a.fd_hz,
    inductance_h: a.inductance_h,
    inductance_u_h: a.inductance_u_h,
    coverage_factor: 2,
    q: a.q,
    q_u: a.q_u,
    esr_ohm: a.esr_ohm,
    esr_u_ohm: a.esr_u_ohm,
    ring_amplitude_v: a.amplitude_v,
    edges_used: a.edges_used,
    edges_rejected: a.edges_rejected,
    warnings: a.warnings,
    settings: {
      tick_hz: c.tick_hz,
      tank_c_f: c.tank_c_f,
      tank_c_u_f: c.tank_c_u_f,
      thresholds_v: c.thresholds_v,
      drive: c.drive,
      range: c.range,
      calibration: c.calibration,
      comparator: c.comparator,
    },
    device: c.device,
    label: typeof c.meta?.label === "string" ? c.meta.label : undefined,
  };
}
