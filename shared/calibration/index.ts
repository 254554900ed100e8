// Public surface of the lab's calibration science (pure TypeScript; see README.md).
export { CalibrationInputError, parseInput } from './errors';
export { waterDensityKgM3, waterDensityWarning, TANAKA_VALID_MAX_C } from './water';
export {
  AIR_DEFAULTS,
  BOROSILICATE_GAMMA_PER_K,
  REFERENCE_WEIGHT_DENSITY_KG_M3,
  airDensityKgM3,
  massToVolume20Ml,
  resolveAirConditions,
  zFactorMlPerG,
  type AirConditions,
} from './air';
export {
  GRAVIMETRIC_DEFAULTS,
  checkRepeatability,
  gravimetricDripRate,
  type AcceptanceResult,
  type GravimetricReplicateResult,
  type GravimetricResult,
} from './gravimetric';
export { drainRateAt, fitBuretteDrain, type MarkTimingResult } from './markTiming';
export { TYPICAL_DROP_VOLUME_ML, countDrops, type DropCountResult } from './dropCounter';
export {
  BURETTE_TOLERANCES,
  BURETTE_TOLERANCE_STANDARDS,
  buretteTolerance,
  describeBurette,
  type BuretteToleranceRow,
} from './buretteTolerance';
export {
  ELECTRODE_DEFAULT_LIMITS,
  FARADAY_C_PER_MOL,
  GAS_CONSTANT_J_PER_MOL_K,
  IUPAC_BUFFERS,
  acceptElectrode,
  calibrateElectrode,
  iupacBufferPH,
  mvToPH,
  nernstSlopeMvPerPH,
  type ElectrodeCalibration,
  type ElectrodeLimits,
} from './electrode';
