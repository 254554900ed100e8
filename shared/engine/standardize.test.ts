import { describe, expect, it } from 'vitest';
import { standardizeTitrant } from './standardize';

describe('titrant standardisation on KHP', () => {
  it('Eurachem/CITAC QUAM (3rd ed., 2012) example A2: c(NaOH) = 0.10214 mol/L, u = 0.00010 mol/L', () => {
    const r = standardizeTitrant({ standard: 'KHP', massG: 0.3888, uMassG: 0.00013, purity: 1.0, uPurity: 0.00029, molarMass: 204.2212, uMolarMass: 0.0038, equivalenceVolumeMl: 18.64, uEquivalenceVolumeMl: 0.013, uRepeatabilityRel: 0.0005 });
    expect(r.concentrationM).toBeCloseTo(0.10214, 5);
    expect(r.uConcentrationM).toBeCloseTo(0.0001, 5);
    expect(r.budget.map((b) => b.name)).toHaveLength(5);
    // the volume is the largest contributor in QUAM A2
    const top = r.budget.slice().sort((a, b) => b.contribution - a.contribution)[0];
    expect(top.name).toMatch(/volume/);
    const sum = Math.sqrt(r.budget.reduce((s, b) => s + b.contribution ** 2, 0));
    expect(sum).toBeCloseTo(r.uConcentrationM, 15);
  });
  it('uses the CIAAW molar mass of KHP (204.2223 g/mol, check-values.md computed) when none is given', () => {
    const r = standardizeTitrant({ standard: 'KHP', massG: 0.3888, equivalenceVolumeMl: 18.64 });
    expect(r.molarMassGPerMol).toBeCloseTo(204.2223, 4);
    expect(r.concentrationM).toBeCloseTo((1000 * 0.3888) / (204.2223 * 18.64), 12);
  });
  it('refuses a missing or non-positive volume with a clear message', () => {
    expect(() => standardizeTitrant({ standard: 'KHP', massG: 0.3888 } as never)).toThrow(/equivalenceVolumeMl is required/);
    expect(() => standardizeTitrant({ standard: 'KHP', massG: 0.3888, equivalenceVolumeMl: 0 })).toThrow(/greater than zero/);
  });
});
