// Maximum permissible error of burettes by capacity and class. Only rows the project has a source for are listed;
// each keeps the source label of shared/reference/check-values.md.
import { buretteSchema, type BuretteInput } from '../schemas/calibration';
import { parseInput } from './errors';

export interface BuretteToleranceRow {
  capacityMl: number;
  class: 'A' | 'B';
  toleranceMl: number;
  /** As labelled in check-values.md: the standards for re-read rows, 'memory' for recalled ones. */
  source: string;
}

/** The standards all rows come from (the 'memory' rows were recalled from them, not re-read). */
export const BURETTE_TOLERANCE_STANDARDS = 'ISO 385:2005, ASTM E287';

export const BURETTE_TOLERANCES: readonly BuretteToleranceRow[] = [
  { capacityMl: 50, class: 'A', toleranceMl: 0.05, source: 'ISO 385:2005, ASTM E287' },
  { capacityMl: 50, class: 'B', toleranceMl: 0.1, source: 'ISO 385:2005, ASTM E287' },
  { capacityMl: 25, class: 'A', toleranceMl: 0.03, source: 'memory' },
  { capacityMl: 10, class: 'A', toleranceMl: 0.02, source: 'memory' },
];

/** Tolerance row for a burette, or undefined when the table has no row for that capacity and class. */
export function buretteTolerance(capacityMl: number, cls: 'A' | 'B'): BuretteToleranceRow | undefined {
  return BURETTE_TOLERANCES.find((r) => r.capacityMl === capacityMl && r.class === cls);
}

/** Validate a burette for the register and attach its tolerance (null when not tabulated: the lab enters it). */
export function describeBurette(input: BuretteInput) {
  const b = parseInput(buretteSchema, input);
  const row = buretteTolerance(b.capacityMl, b.class);
  return { ...b, toleranceMl: row?.toleranceMl ?? null, toleranceSource: row?.source ?? null };
}
