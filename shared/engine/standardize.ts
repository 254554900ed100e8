// Titrant standardisation on a primary standard: c = 1000 · m · P / (M · V), in the form of Eurachem/CITAC QUAM
// (3rd ed., 2012) example A2, with its GUM budget.
import { standardizeInputSchema, type StandardizeInput, type StandardizeResult } from '../schemas/run-document';
import { FORMULAS, molarMass } from './constants';
import { parseOrThrow } from './errors';
import { productBudget } from './budget';

export function standardizeTitrant(input: StandardizeInput): StandardizeResult {
  const d = parseOrThrow(standardizeInputSchema, input);
  const M = d.molarMass ?? molarMass(FORMULAS[d.standard]);
  const P = d.purity ?? 1;
  const c = (1000 * d.massG * P) / (M * d.equivalenceVolumeMl);
  const { u, budget } = productBudget(c, [
    { name: `mass of ${d.standard} m (g)`, value: d.massG, u: d.uMassG ?? 0, exponent: 1 },
    { name: `purity of ${d.standard} P`, value: P, u: d.uPurity ?? 0, exponent: 1 },
    { name: `molar mass of ${d.standard} M (g/mol)`, value: M, u: d.uMolarMass ?? 0, exponent: -1 },
    { name: 'equivalence volume V (mL)', value: d.equivalenceVolumeMl, u: d.uEquivalenceVolumeMl ?? 0, exponent: -1 },
    // repeatability enters as a factor 1 with relative uncertainty, as in QUAM A2
    { name: 'repeatability (factor 1)', value: 1, u: d.uRepeatabilityRel ?? 0, exponent: 1 },
  ]);
  return { concentrationM: c, uConcentrationM: u, budget, molarMassGPerMol: M };
}
