// Public API of the analysis engine (pure TypeScript: no React, no Node APIs).
export { analyzeRun, type AnalyzeOptions } from './analyze';
export { simulateCurve, type SimulatedCurve } from './simulate';
export { timeToVolume, buildDeliveryMap, type DeliveryMap } from './delivery';
export { standardizeTitrant } from './standardize';
export { pKw, molarMass, daviesA, daviesLogGamma, ATOMIC_WEIGHTS, FORMULAS, DEFAULT_BURETTE_TOLERANCE_ML, DEFAULT_BURETTE_TOLERANCE_SOURCE, DEFAULT_READING_UNCERTAINTY_ML } from './constants';
export { ChargeBalanceModel, equivalenceVolumes, type Activity, type ModelSetup } from './model';
export { fitCurve, effectiveWeights, type FitOutput, type FitStart } from './fit';
export { savitzkyGolay, localPolyValue, sgWeights } from './savgol';
export { EngineInputError } from './errors';
export type { RunDocument, RunDocumentInput, AnalysisResult, SimulateParams, StandardizeInput, StandardizeResult, BudgetRow, DeliveryMapInfo } from '../schemas/run-document';
