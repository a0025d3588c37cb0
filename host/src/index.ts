// henrytick host library: the entry points for other bench applications.
export { openTester } from "./open-tester.ts";
export type { OpenedTester, TesterTarget } from "./open-tester.ts";
export { DeviceClient } from "./device/client.ts";
export type { MeasureSettings, ClientOptions } from "./device/client.ts";
export type { DeviceIdentity, DeviceProfile } from "./device/profile.ts";
export { CodedError } from "./coded-error.ts";
export {
  WarningCode, CautionCode, PartFaultCode, ErrorCode, NO_USABLE_RING, isNoUsableRing, isAnalysisFailure,
  WARNING_MEANINGS, CAUTION_MEANINGS, PART_FAULT_MEANINGS, ERROR_GROUPS,
} from "./codes.ts";
export type { AnalysisErrorCode, CalibrationErrorCode } from "./codes.ts";
export { packageVersion } from "./version.ts";
export { DeviceError, DeviceTimeoutError } from "./device/errors.ts";
export { ProtocolError } from "./device/frames.ts";
export { TransportError } from "./transport/transport.ts";
export type { Transport } from "./transport/transport.ts";
export { listSerialPorts } from "./transport/serial-transport.ts";
export type { SerialPortInfo } from "./transport/serial-transport.ts";
export { measurePart, analyzeCapture, judgeCapture, MeasureError, PartFaultError } from "./measure/measure-part.ts";
export { repeatReadings } from "./measure/repeat-readings.ts";
export type { RepeatOptions, RepeatOutcome } from "./measure/repeat-readings.ts";
export type { Reading, MeasureOptions } from "./measure/measure-part.ts";
export type { FrequencyChoice } from "./ranging/choose-setting.ts";
export type { MeasureEvent, MeasurePhase, PulseEvent, StepEvent, CautionEvent, DoneEvent, SettingInfo } from "./measure/events.ts";
export { buildResult, readingResult } from "./measure/result.ts";
export type { ResultJson } from "./measure/result.ts";
export { measureWithReport, reportReading, readingBudget, selfCapacitanceJson } from "./measure/reading-report.ts";
export type { ReadingReport, ReadingReportOptions, SelfCapacitanceJson } from "./measure/reading-report.ts";
export { readCaptureFile, writeCaptureFile, parseCapture, CaptureFileError, MAX_CAPTURE_EDGES, MAX_CAPTURE_BYTES } from "./capture/capture-file.ts";
export { writeFileAtomic, FileWriteError } from "./fs/atomic-write.ts";
export { checkCapturePlausible, checkReadingPlausible, checkProfileAgainstBoard, ImplausibleError } from "./measure/plausibility.ts";
export type { CaptureV1 } from "./capture/capture-file.ts";
export { analyzeRing, AnalysisError } from "./analysis/index.ts";
export type { RingInput, RingAnalysis, ComparatorTiming } from "./analysis/index.ts";
// The demo parts openTester({ scenario }) measures; the simulated tester itself, its board models
// and demo helpers are the henrytick/sim subpath (sim/index.ts).
export { loadScenario, listScenarios } from "./sim/scenario.ts";
export type { Scenario, PartModel } from "./sim/scenario.ts";
export {
  CalibrationError, CALIBRATION_METHODS, validateProfile, emptyProfile, loadProfile, saveProfile, restorePreviousProfile, configDir, profilePaths,
  appliedCalibration, deviceCalibration, calibrateWithReference, calibrateWithParallelCapacitor, calibrateThresholds, calibrateSkew,
  measureTimebase, measureSelfCapacitance, measureLeadInductance, measureFixtureCapacitance,
} from "./calibration/index.ts";
// The methods behind them (GUM propagation, Monte Carlo, the two-capacitance solution, budgets)
// are the henrytick/calibration subpath (calibration/index.ts).
export type {
  CalibrationProfile, CalibrationMethod, AppliedCalibration, TankEntry, StoreOptions, ReferenceInductor, ParallelCapacitor, TimebaseResult,
  SelfCapacitanceReading, UncertaintyBudget, BudgetLine, DeviceCalibration, SkewFit,
} from "./calibration/index.ts";
// Bench workflows: values as the trade writes them, conformity decisions, sorting, winding,
// continuous reading, reports, and an abortable reading.
export { parseValue, parseValueIn, ValueError, ValueSyntaxError } from "./values/parse-value.ts";
export { MEASURABLE_L_H, MEASURABLE_TEXT } from "./values/range.ts";
export type { ParsedValue } from "./values/parse-value.ts";
export { parseTolerance, toleranceLimits, TOLERANCE_LETTERS } from "./values/tolerance.ts";
export type { Tolerance, Limits } from "./values/tolerance.ts";
export { seriesValues, nearestPreferred, parseSeriesName, SERIES_NAMES } from "./values/e-series.ts";
export type { SeriesName, Preferred } from "./values/e-series.ts";
export { formatMeasured, formatPercent, formatValue, formatValueOnly, iecCode } from "./values/format-value.ts";
export { decideConformity, conformanceProbability, normalCdf, roundProbability } from "./workflows/conformity.ts";
export type { Decision, ConformityResult } from "./workflows/conformity.ts";
export { classify } from "./workflows/classify.ts";
export type { ToleranceSpec, Classification } from "./workflows/classify.ts";
export { measureAbortable, MeasureAbortedError } from "./workflows/abortable-measure.ts";
export type { AbortableMeasureOptions } from "./workflows/abortable-measure.ts";
export { SortSession } from "./workflows/sort-session.ts";
export type { SortSpec, PartRecord, Tally } from "./workflows/sort-session.ts";
export { SortLog, SortLogError, CSV_COLUMNS, readSortLog } from "./workflows/sort-log.ts";
export { runSort } from "./workflows/sort-runner.ts";
export { SettingHold } from "./workflows/setting-hold.ts";
export type { HeldReading, HeldSetting } from "./workflows/setting-hold.ts";
export type { SortEvent, SortRunOptions } from "./workflows/sort-runner.ts";
export { PresenceTracker } from "./workflows/part-presence.ts";
export type { Observation, PresenceAction, PresenceOptions } from "./workflows/part-presence.ts";
export { makeBins, binOf } from "./workflows/bins.ts";
export type { BinSpec, BinResult } from "./workflows/bins.ts";
export { RunningStats } from "./workflows/running-stats.ts";
export type { StatsSummary } from "./workflows/running-stats.ts";
export { windingAdvice, fitWindingModel, predictInductance } from "./workflows/winding.ts";
export type { WindingReading, WindingAdvice, WindingModel } from "./workflows/winding.ts";
export { assessStability, sparkline, History, SettingHistory } from "./workflows/watch-trend.ts";
export type { Stability, StabilityResult } from "./workflows/watch-trend.ts";
export { buildReport, writeReport } from "./report/write-report.ts";
export { reportData } from "./report/report-data.ts";
export type { ReportData } from "./report/report-data.ts";
