// henrytick host library: the entry points for other bench applications.
export { openTester } from "./open-tester.ts";
export type { OpenedTester, TesterTarget } from "./open-tester.ts";
export { DeviceClient } from "./device/client.ts";
export type { MeasureSettings, ClientOptions } from "./device/client.ts";
export type { DeviceIdentity, DeviceProfile } from "./device/profile.ts";
export { DeviceError, DeviceTimeoutError } from "./device/errors.ts";
export { ProtocolError } from "./device/frames.ts";
export { TransportError } from "./transport/transport.ts";
export type { Transport } from "./transport/transport.ts";
export { measurePart, analyzeCapture, MeasureError } from "./measure/measure-part.ts";
export type { Reading, MeasureOptions } from "./measure/measure-part.ts";
export { buildResult } from "./measure/result.ts";
export type { ResultJson } from "./measure/result.ts";
export { readCaptureFile, writeCaptureFile, parseCapture, CaptureFileError } from "./capture/capture-file.ts";
export type { CaptureV1 } from "./capture/capture-file.ts";
export { analyzeRing, AnalysisError } from "./analysis/index.ts";
export type { RingInput, RingAnalysis } from "./analysis/index.ts";
export { SimTester } from "./sim/sim-tester.ts";
export { loadScenario, listScenarios } from "./sim/scenario.ts";
export type { Scenario, PartModel } from "./sim/scenario.ts";
export { PtyDevice, PtyDeviceError } from "./sim/pty-device.ts";
export type { PtyDeviceOptions } from "./sim/pty-device.ts";
export { referenceBoard, nominalBoard } from "./sim/board-model.ts";
export type { BoardModel } from "./sim/board-model.ts";
export { expectedReading } from "./sim/front-end.ts";
export {
  CalibrationError, validateProfile, emptyProfile, loadProfile, saveProfile, restorePreviousProfile, configDir, profilePaths,
  appliedCalibration, deviceCalibration, calibrateWithReference, calibrateWithParallelCapacitor, calibrateThresholds,
  measureTimebase, timebaseFromSamples, measureSelfCapacitance, solveTwoCapacitance, singleTankBudget, twoTankBudget,
  propagate, monteCarlo,
} from "./calibration/index.ts";
export type {
  CalibrationProfile, TankEntry, StoreOptions, ReferenceInductor, ParallelCapacitor, TickCounter, HostClock, TimebaseResult,
  TwoCapacitanceInput, TwoCapacitanceResult, SelfCapacitanceReading, UncertaintyBudget, BudgetLine, DeviceCalibration,
} from "./calibration/index.ts";
