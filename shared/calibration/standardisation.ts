// Standardisation with stated defaults for the uncertainties the analyst leaves out; the math is the engine's
// standardizeTitrant (QUAM A2 form), not repeated here.
import { standardizeTitrant } from '../engine/standardize';
import type { StandardizeInput, StandardizeResult } from '../schemas/run-document';

/**
 * Defaults for absent uncertainties, each labelled with where it comes from. The purity, molar mass and
 * repeatability values are those of Eurachem/CITAC QUAM (3rd ed., 2012) example A2; the balance and volume ones are
 * common practice (0.1 mg analytical balance; 0.02 mL for reading a burette).
 */
export const STANDARDISATION_DEFAULTS = {
  uMassG: { value: 0.0001, source: 'analytical balance, 0.1 mg (common practice)' },
  uPurity: { value: 0.00029, source: 'certificate 1.000 ± 0.0005, rectangular (as QUAM A2)' },
  uMolarMass: { value: 0.0038, source: 'KHP molar mass u as in QUAM A2' },
  uEquivalenceVolumeMl: { value: 0.02, source: 'burette reading and end point, 0.02 mL (common practice)' },
  uRepeatabilityRel: { value: 0.0005, source: 'relative repeatability as in QUAM A2' },
} as const;

export interface StandardisationOutcome extends StandardizeResult {
  /** The inputs as used, defaults filled in. */
  used: Required<Pick<StandardizeInput, 'uMassG' | 'uPurity' | 'uMolarMass' | 'uEquivalenceVolumeMl' | 'uRepeatabilityRel'>> &
    StandardizeInput;
  assumptions: string[];
  /** Relative u shared by replicates of the same standard lot (purity and molar mass): does not average out. */
  uSharedRel: number;
}

export function standardiseWithDefaults(input: StandardizeInput): StandardisationOutcome {
  const assumptions: string[] = [];
  const used = { ...input } as StandardisationOutcome['used'];
  for (const key of Object.keys(STANDARDISATION_DEFAULTS) as (keyof typeof STANDARDISATION_DEFAULTS)[]) {
    if (input[key] === undefined) {
      used[key] = STANDARDISATION_DEFAULTS[key].value;
      assumptions.push(`${key} = ${STANDARDISATION_DEFAULTS[key].value} (${STANDARDISATION_DEFAULTS[key].source})`);
    }
  }
  if (input.purity === undefined) assumptions.push('purity = 1 (no certificate value given)');
  const result = standardizeTitrant(used);
  const P = used.purity ?? 1;
  const uSharedRel = Math.hypot(used.uPurity / P, used.uMolarMass / result.molarMassGPerMol);
  return { ...result, used, assumptions, uSharedRel };
}
