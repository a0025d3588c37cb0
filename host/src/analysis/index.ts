// Ring-down analysis: comparator edges to f0, L, Q and ESR with uncertainties (JCGM 100:2008)
// and diagnostics. Pure numerical code: no I/O, no clock, no device or transport imports.
//
//   analyzeRing(input)       the measurement: a weighted fit of the edge model of measurement
//                            docs/method.md §2 with robust cycle bookkeeping; throws AnalysisError
//                            (EMPTY_CAPTURE, TOO_FEW_EDGES, BAD_INPUT, NO_RING)
//   ringCramerRao(...)       the bound on L and Q for a ring, edge set and noise (docs/method.md §4)
//   fitLinePeriod(input)     baselines for the benchmark: a straight line through the edges,
//   reciprocalPeriod(input)  and first-to-last counting; both read the period long
//   ringQuantities(...)      (wd, alpha) and their covariance to f0, L, Q, ESR and the budget

export { AnalysisError } from "./types.ts";
export type { ComparatorTiming, RingAnalysis, RingInput, Warning } from "./types.ts";
export { analyzeRing } from "./analyze-ring.ts";
export { ringCramerRao } from "./cramer-rao.ts";
export type { EdgeNoiseModel, RingBound, RingTruth } from "./cramer-rao.ts";
export { fitLinePeriod, reciprocalPeriod, linePeriodVariance, reciprocalPeriodVariance } from "./baselines.ts";
export type { PeriodEstimate } from "./baselines.ts";
export { ringQuantities, inductanceFromFrequency, inductanceRelU, COVERAGE_K } from "./ring-quantities.ts";
export type { RingQuantities } from "./ring-quantities.ts";
