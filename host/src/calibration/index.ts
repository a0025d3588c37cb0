// Calibration: the per-tester profile, the procedures that fill it, the two-capacitance
// self-capacitance method and the uncertainty budget (JCGM 100:2008, checked by JCGM 101:2008).

export { CalibrationError, CALIBRATION_CODES } from "./errors.ts";
export { PROFILE_FORMAT, PROFILE_VERSION, CALIBRATION_METHODS, emptyProfile, validateProfile } from "./profile-schema.ts";
export type { CalibrationProfile, CalibrationMethod, TankEntry, ThresholdEntry, TimebaseEntry, LeadEntry, Provenance } from "./profile-schema.ts";
export type { AppliedCalibration } from "./applied.ts";
export { configDir, profilePaths, loadProfile, saveProfile, readProfileFile, restorePreviousProfile, storeFor, completePendingRestore } from "./profile-store.ts";
export type { StoreOptions } from "./profile-store.ts";
export { appliedCalibration, tankCapacitanceNow, timebaseKnowledge, CRYSTAL_DRIFT_PPM } from "./apply-profile.ts";
export { propagate, sensitivities, groupContributions, rectangularU } from "./gum-propagation.ts";
export type { InputQuantity, Contribution, PropagatedOutput } from "./gum-propagation.ts";
export { monteCarlo, standardUncertaintyAgrees, SeededUniform } from "./monte-carlo.ts";
export type { InputDistribution, MonteCarloResult } from "./monte-carlo.ts";
export { solveTwoCapacitance, twoCapacitanceModel, ringFrequencyHz } from "./two-capacitance.ts";
export type { TankRing, TwoCapacitanceInput, TwoCapacitanceResult } from "./two-capacitance.ts";
export { combineBudget, singleTankBudget, twoTankBudget, BUDGET_GROUPS } from "./uncertainty-budget.ts";
export type { BudgetLine, UncertaintyBudget, BudgetGroup, TimebaseKnowledge } from "./uncertainty-budget.ts";
export { calibrateWithReference, tankFromReadings, referenceSpanProblem, checkReference } from "./reference-inductor.ts";
export type { ReferenceInductor, ReferenceOptions, ReferenceOutcome, TankFromReference } from "./reference-inductor.ts";
export { calibrateWithParallelCapacitor, tankFromParallel } from "./parallel-capacitor.ts";
export type { ParallelCapacitor, ParallelResult, ParallelOptions } from "./parallel-capacitor.ts";
export { fitThresholds, offsetForNoDrift, MIN_Q_FOR_THRESHOLDS } from "./threshold-fit.ts";
export type { ThresholdFit } from "./threshold-fit.ts";
export { measureTimebase, timebaseFromSamples, timebaseUnsupported, testerTickCounter, hostClock, MAX_READ_SPACING_S, HOST_CLOCK_U_PPM } from "./timebase.ts";
export type { TickCounter, HostClock, TickSample, TimebaseResult } from "./timebase.ts";
export { measureSelfCapacitance } from "./self-capacitance-reading.ts";
export type { SelfCapacitanceReading, SelfCapacitanceOptions } from "./self-capacitance-reading.ts";
export { calibrateThresholds } from "./threshold-procedure.ts";
export { calibrateSkew, skewTanks } from "./skew-procedure.ts";
export { fitSkew, MIN_FREQUENCY_SPAN } from "./skew-fit.ts";
export type { SkewFit, SkewRing } from "./skew-fit.ts";
export { deviceCalibration } from "./device-calibration.ts";
export type { DeviceCalibration } from "./device-calibration.ts";
export { measureLeadInductance } from "./nulling.ts";
export type { LeadNullingOptions, LeadNullingResult } from "./nulling.ts";
export { withLeadNulling } from "./nulling-reading.ts";
export { calibrationChanges, describeChanges, CHANGE_K } from "./calibration-change.ts";
export type { TankChange } from "./calibration-change.ts";
