import { describe, expect, it } from 'vitest';
import { STANDARDISATION_DEFAULTS, standardiseWithDefaults } from './standardisation';

describe('standardiseWithDefaults', () => {
  it('Eurachem/CITAC QUAM (3rd ed., 2012) example A2: c(NaOH) = 0.10214 mol/L, u = 0.00010 mol/L', () => {
    const r = standardiseWithDefaults({
      standard: 'KHP',
      massG: 0.3888,
      uMassG: 0.00013,
      purity: 1.0,
      uPurity: 0.00029,
      molarMass: 204.2212,
      uMolarMass: 0.0038,
      equivalenceVolumeMl: 18.64,
      uEquivalenceVolumeMl: 0.013,
      uRepeatabilityRel: 0.0005,
    });
    expect(r.concentrationM).toBeCloseTo(0.10214, 5);
    expect(r.uConcentrationM).toBeCloseTo(0.0001, 5);
    expect(r.assumptions).toEqual([]);
  });

  it('fills stated defaults for absent uncertainties and says so', () => {
    const r = standardiseWithDefaults({ standard: 'KHP', massG: 0.5, equivalenceVolumeMl: 24.5 });
    expect(r.used.uMassG).toBe(STANDARDISATION_DEFAULTS.uMassG.value);
    expect(r.used.uRepeatabilityRel).toBe(STANDARDISATION_DEFAULTS.uRepeatabilityRel.value);
    expect(r.assumptions.some((a) => a.startsWith('uPurity'))).toBe(true);
    expect(r.assumptions).toContain('purity = 1 (no certificate value given)');
    // CIAAW conventional atomic weights: KHP 204.2223 g/mol (check-values.md, computed)
    expect(r.molarMassGPerMol).toBeCloseTo(204.2223, 3);
    expect(r.concentrationM).toBeCloseTo((1000 * 0.5) / (204.2223 * 24.5), 5);
    expect(r.uSharedRel).toBeCloseTo(Math.hypot(0.00029, 0.0038 / r.molarMassGPerMol), 10);
  });
});
