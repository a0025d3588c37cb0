// Ring-down analysis: comparator edges to f0, L, Q and ESR with uncertainties (JCGM 100:2008)
// and diagnostics. Pure numerical code: no I/O, no clock.

export { AnalysisError } from "./types.ts";
export type { RingAnalysis, RingInput, Warning } from "./types.ts";
export { analyzeRing } from "./analyze-ring.ts";
export { ringCramerRao } from "./cramer-rao.ts";
export type { EdgeNoiseModel, RingBound, RingTruth } from "./cramer-rao.ts";
export { fitLinePeriod, reciprocalPeriod, linePeriodVariance, reciprocalPeriodVariance } from "./baselines.ts";
export type { PeriodEstimate } from "./baselines.ts";
export { ringQuantities, inductanceFromFrequency, inductanceRelU, COVERAGE_K } from "./ring-quantities.ts";
export type { RingQuantities } from "./ring-quantities.ts";
