// Every stable code the library gives a caller, listed once with what it means: the warnings a
// reading carries, the cautions in its progress, the part faults, and the codes of the errors it
// raises. The types are unions the compiler checks (`Warning.code: WarningCode`, `CodedError`'s
// code: `ErrorCode`), and the constants are what consumers compare with. docs/codes.md is this
// table in prose form; test/e2e/codes-table.test.ts checks that the two agree.

/** Builds `{ NAME: "NAME", ... }` from a table keyed by code, typed with each literal. */
function names<T extends Record<string, string>>(table: T): { readonly [K in keyof T]: K } {
  return Object.freeze(Object.fromEntries(Object.keys(table).map((k) => [k, k]))) as { readonly [K in keyof T]: K };
}

/** Warnings a reading can carry (`RingAnalysis.warnings`, the result's `warnings`). */
export const WARNING_MEANINGS = {
  TOO_FEW_CYCLES: "so few cycles were fitted that L and Q can be off by more than their stated uncertainty",
  RING_TRUNCATED: "the ring was still well above the threshold when the capture ended, so Q is poorly determined",
  THRESHOLDS_NEAR_AMPLITUDE: "the ring starts only just above the comparator threshold",
  MANY_REJECTED: "many edges were set aside as outliers (wiring, grounding or comparator hysteresis)",
  MISSING_EDGES: "half-cycles have no usable edge: the capture is losing edges",
  SUSPECTED_CLIPPING: "the first cycle's edges sit off the ring model: the front end may clip",
  POOR_FIT: "the residuals are correlated: the ring is not a clean damped sine; the uncertainty is widened",
  FREQUENCY_DRIFT: "the ring frequency changes from start to end (voltage-dependent tank or a core near saturation)",
  COMPARATOR_SKEW: "rising and falling edges sit apart by a constant time: the comparator's rise and fall delays differ from what the reading assumed",
  THRESHOLD_IN_NOISE: "edges after a point fired on the comparator's noise (chatter at the crossings, or noise crossing both thresholds after the ring died); only the ring before them was used",
  Q_UNCERTAIN: "Q is determined only loosely",
  AMBIGUOUS_DECAY: "the edges fit two different decays almost equally well; the uncertainties cover both",
  FEW_EDGES_BEST_SETTING: "automatic ranging found no setting with enough edges and kept the best one",
} as const;
export type WarningCode = keyof typeof WARNING_MEANINGS;
export const WarningCode = names(WARNING_MEANINGS);

/** Cautions in a reading's progress events (`CautionEvent.code`): the plan changed. */
export const CAUTION_MEANINGS = {
  RING_OVER_LIMIT: "a probe's ring passed the peak limit; ranging stops stepping up",
  AMPLITUDE_DEPENDENT: "the ring changes with its amplitude; ranging tries a gentler setting",
} as const;
export type CautionCode = keyof typeof CAUTION_MEANINGS;
export const CautionCode = names(CAUTION_MEANINGS);

/**
 * Lines of a reading's uncertainty budget (`RingAnalysis.budget[].name`): standard relative
 * contributions to u(L)/L. The analysis gives the first three; a reading adds the others.
 */
export const READING_BUDGET_LINES = {
  fit: "the edge-model fit",
  capacitance: "the tank capacitance as applied to the capture",
  timebase: "the tick rate (crystal tolerance or its calibration)",
  "self-capacitance": "the part's own capacitance, unknown on one tank",
  "stray capacitance": "capacitance the tank's value does not include (fixture, strays) when uncalibrated",
  leads: "the test leads' series inductance, subtracted when nulled (calibrate short)",
  fixture: "the fixture's capacitance, added to a tank whose value does not hold it (calibrate open)",
} as const;
export type ReadingBudgetLine = keyof typeof READING_BUDGET_LINES;

/** Part faults (`PartFaultError.code`, `Reading.suspect.code`, the result's `suspect.code`). */
export const PART_FAULT_MEANINGS = {
  FIRST_CYCLE_CLIPPED: "the first cycle is clipped: the part or front end is overdriven",
  CORE_SATURATING: "the inductance changes with the current: the core saturates",
  FIXTURE_CHATTER: "edges chatter: a loose clip or a noisy fixture",
  RING_OUTLASTS_WINDOW: "the ring outlasts the capture window or edge buffer",
  PART_SHORTED: "the part reads as a short (a few nanohenries or no ring on any setting)",
} as const;
export type PartFaultCode = keyof typeof PART_FAULT_MEANINGS;
export const PartFaultCode = names(PART_FAULT_MEANINGS);

/** Analysis of a capture that gave no reading (`AnalysisError`, and `MeasureError` around it). */
export const ANALYSIS_ERROR_MEANINGS = {
  EMPTY_CAPTURE: "the capture holds no edges",
  TOO_FEW_EDGES: "too few edges to fit a ring",
  NO_RING: "the edges do not form a damped ring",
  BAD_INPUT: "the analysis input is malformed (ticks, levels, rate or thresholds)",
} as const;

/** Taking a reading (`MeasureError`, `MeasureAbortedError`). */
export const MEASURE_ERROR_MEANINGS = {
  NO_SETTING: "no setting of the tester suits the part within the limits",
  SETTING_UNSAFE: "the setting asked for would pass a safety limit; it was not pulsed",
  PEAK_LIMIT: "the ring would pass the peak-voltage limit",
  CHARGE_LIMIT: "the charge time exceeds the drive resistor's interlock (also the tester's own refusal)",
  ABORTED: "the reading was aborted; the switch is open",
} as const;

/** A capture or reading that cannot be physical (`ImplausibleError`, and `MeasureError` around it). */
export const PLAUSIBILITY_ERROR_MEANINGS = {
  EDGES_NOT_ALTERNATING: "two edges in a row leave the comparator at the same level",
  TOO_MANY_EDGES: "more edges than the capture asked for or can hold",
  TICK_RATE_MISMATCH: "the tick rate contradicts the capture's own nominal rate and timebase error",
  TICK_RATE_IMPLAUSIBLE: "the tick rate or timebase error is beyond any tester's",
  TANK_IMPLAUSIBLE: "the tank value is beyond any tester's or far from its own nominal",
  THRESHOLDS_IMPLAUSIBLE: "the thresholds are beyond any comparator front end",
  RING_AMPLITUDE_IMPLAUSIBLE: "the ring is higher than the drive or the clamp allows",
  RESULT_OUT_OF_RANGE: "the reading is outside what the timer can resolve or any tester measures",
} as const;

/** Calibration and profiles (`CalibrationError`). */
export const CALIBRATION_ERROR_MEANINGS = {
  PROFILE_INVALID: "a stored profile breaks the schema (the field is named)",
  PROFILE_VERSION: "a stored profile is of a version this build cannot read",
  PROFILE_UNREADABLE: "the profile file exists but cannot be read or is not JSON",
  PROFILE_WRONG_DEVICE: "the profile belongs to another tester",
  PROFILE_BOARD_MISMATCH: "the profile's tanks do not fit the tanks the tester's board reports",
  NO_PREVIOUS: "restore was asked for with no previous profile kept",
  BAD_REFERENCE: "the reference value or uncertainty makes no sense",
  OUT_OF_SPAN: "the reference is outside the usable span of the tank",
  NONSENSE_RESULT: "a procedure produced a negative or implausible value",
  TIMEBASE_UNSUPPORTED: "the tester cannot report its tick counter",
  TWO_TANKS_UNAVAILABLE: "no second tank suits the part for the self-capacitance method",
  CALIBRATION_SHIFT: "a new calibration moves a tank more than chance and tolerance explain, and was not confirmed",
  REFERENCE_MISMATCH: "the reference's first reading disagrees with the value entered for it by more than any tank tolerance explains",
  CALIBRATION_WORSE: "a new value is less certain than the stored one and was not confirmed; the stored one stays in use",
} as const;

export type CalibrationErrorCode = keyof typeof CALIBRATION_ERROR_MEANINGS;

/** The tester refused a command (`DeviceError`, from its `ER` frame; docs/protocol.md). */
export const DEVICE_ERROR_MEANINGS = {
  LINK_CRC: "the command arrived corrupted (CRC mismatch)",
  LINK_SYNTAX: "the tester could not read the command line",
  UNKNOWN_COMMAND: "the firmware does not know the command",
  BAD_ARGUMENT: "a setting is outside the tester's limits",
  BUSY: "a measurement is already running",
  REST_PENDING: "the tester's rest between pulses has not yet elapsed",
  LINE_TOO_LONG: "the tester received a line longer than any the host sends",
  RINGING: "the previous ring still produces edges",
  CAPTURE_FAULT: "the capture hardware misbehaved and the switch was forced open",
  DEVICE_ERROR: "an error number this host does not know",
} as const;

/** The link and the replies on it (`TransportError`, `ProtocolError`, `DeviceTimeoutError`). */
export const LINK_ERROR_MEANINGS = {
  LINK_ERROR: "the serial port failed",
  LINK_DISCONNECTED: "the tester went away (unplugged, reset)",
  PORT_IN_USE: "another program has the serial port open",
  PORTS_UNAVAILABLE: "this system cannot list its serial ports",
  LINK_NOISE: "stray bytes on the port did not stop",
  LINK_CORRUPT: "a reply arrived corrupted",
  BAD_REPLY: "a reply was missing or not of the expected form",
  BAD_FIELD: "a reply field is not an integer",
  BAD_PROFILE: "the tester's board profile is incomplete",
  PROTOCOL_VERSION: "the tester speaks another protocol version",
  CAPTURE_DAMAGED: "the capture stream failed its checks and could not be recovered",
  CAPTURE_LOST: "the tester no longer holds the capture asked for",
  DEVICE_TIMEOUT: "nothing answered on this link",
  DEVICE_SILENT: "a tester that was talking went quiet",
} as const;

/** Files (`CaptureFileError`, `ScenarioError`, `SortLogError`, `FileWriteError`). */
export const FILE_ERROR_MEANINGS = {
  BAD_CAPTURE_FILE: "a capture file breaks its schema or cannot be read (the field is named)",
  BAD_SCENARIO: "a scenario file breaks its schema or cannot be read (the field is named)",
  LOG_HEADER_MISMATCH: "a sort log has other columns than this version writes",
  LOG_UNWRITABLE: "a sort log cannot be opened for appending",
  LOG_DISAGREE: "a sort's CSV log holds rows its JSON Lines log does not",
  NO_SUCH_FOLDER: "the folder to write into does not exist",
  WRITE_DENIED: "writing is not allowed there",
  DISK_FULL: "no space left to write",
  WRITE_FAILED: "the write failed for another reason (the message says which)",
  OUTPUT_FAILED: "the command line could not write its output (a full disk, a closed file)",
} as const;

/** The simulated and emulated testers (`FirmwareImageError`, `BoardProfileError`, `PtyDeviceError`, `QemuDeviceError`). */
export const SIMULATOR_ERROR_MEANINGS = {
  FIRMWARE_IMAGE_MISSING: "the firmware image the simulated tester runs is missing",
  UNKNOWN_BOARD: "no board file of that name (the message lists the boards there are)",
  NO_SIMULATED_UNIT: "the board file describes no simulated unit of the board",
  SIM_FAULT: "the simulated tester failed",
  SOCAT_MISSING: "socat is not installed (needed for the pseudo-terminal)",
  SOCAT_FAILED: "socat could not be run",
  SOCAT_EXITED: "socat stopped",
  SOCAT_NO_PTY: "socat reported no pseudo-terminal in time",
  QEMU_MISSING: "QEMU is not installed (needed for the emulated board)",
  QEMU_FAILED: "QEMU or its monitor failed",
  QEMU_EXITED: "QEMU stopped",
  QEMU_NO_PTY: "QEMU reported no pseudo-terminal in time",
  PORT_SILENT: "the emulated board sent nothing in time",
  EMULATED_IMAGE_MISSING: "the emulated board's image needs a source checkout",
  EMULATED_BUILD_FAILED: "building the emulated board's image failed",
  EDGE_SERVER_FAILED: "the emulated board's edge server could not start",
} as const;

/** A value typed by the user (`ValueError`, a RangeError; `ValueSyntaxError` for BAD_VALUE). */
export const VALUE_ERROR_MEANINGS = {
  BAD_VALUE: "a value could not be read as the trade writes it",
  WRONG_UNIT: "a value is written in another unit than the option takes (10uF for an inductance)",
  AMBIGUOUS_VALUE: "a bare number where the prefix decides the value (10 for an inductance)",
  OUT_OF_RANGE: "a value lies outside what it may be (the measurable range, a tolerance wider than its nominal)",
  TOLERANCE_CONFLICT: "a nominal's tolerance letter and the tolerance given beside it differ (10uH F with 5%)",
} as const;

/** Every error code, by group, for the documentation table. */
export const ERROR_GROUPS = {
  analysis: ANALYSIS_ERROR_MEANINGS,
  measure: MEASURE_ERROR_MEANINGS,
  "part fault": PART_FAULT_MEANINGS,
  plausibility: PLAUSIBILITY_ERROR_MEANINGS,
  calibration: CALIBRATION_ERROR_MEANINGS,
  tester: DEVICE_ERROR_MEANINGS,
  link: LINK_ERROR_MEANINGS,
  file: FILE_ERROR_MEANINGS,
  simulator: SIMULATOR_ERROR_MEANINGS,
  value: VALUE_ERROR_MEANINGS,
} as const;

type Groups = typeof ERROR_GROUPS;
export type ErrorCode = { [G in keyof Groups]: keyof Groups[G] }[keyof Groups] & string;
export const ErrorCode = names(Object.assign({}, ...Object.values(ERROR_GROUPS)) as { [K in ErrorCode]: string });

/**
 * The analysis codes that mean "this capture holds no usable ring" (as opposed to malformed
 * input): automatic ranging tries another setting on them, and a part that gives only these on
 * a setting made for a short is judged shorted.
 */
export const NO_USABLE_RING: readonly ErrorCode[] = [ErrorCode.EMPTY_CAPTURE, ErrorCode.TOO_FEW_EDGES, ErrorCode.NO_RING];

export type AnalysisErrorCode = keyof typeof ANALYSIS_ERROR_MEANINGS;

/** True for a code the analysis gives when it cannot follow a capture (any AnalysisErrorCode). */
export function isAnalysisFailure(code: string): code is AnalysisErrorCode {
  return code in ANALYSIS_ERROR_MEANINGS;
}

/** True for one of the NO_USABLE_RING codes. */
export function isNoUsableRing(code: string): boolean {
  return (NO_USABLE_RING as readonly string[]).includes(code);
}
