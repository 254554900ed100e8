import { describe, expect, it } from 'vitest';
import { DEMO_SAMPLES, demoRun } from './runs';

// The demo runs are invented (simulated with seeded noise), but what the engine reads back from them must agree with
// what went in: the tabled constants below, noise of 0.01 pH, and the model the engine fits (Davies activities).
// Molar masses, CIAAW conventional atomic weights (computed, check-values.md): benzoic acid 122.1230, KHP 204.2223,
// acetic acid 60.0520 g/mol. pKa at 25 °C, I → 0: benzoic 4.204, acetic 4.756 (CRC-style tables), phthalic pKa2
// 5.408 (Kaye & Laby).
const TABLE: Record<string, { molarMass: number; pKa: number }> = {
  C7H6O2: { molarMass: 122.123, pKa: 4.204 },
  C8H5KO4: { molarMass: 204.2223, pKa: 5.408 },
  C2H4O2: { molarMass: 60.052, pKa: 4.756 },
};

type Result = {
  fit: { rmse: number; converged: boolean } | null;
  pKaThermodynamic: number[];
  molarMassGPerMol: number | null;
  molarMassU: number | null;
  warnings: string[];
};

describe('demo runs read back as the simulation made them', () => {
  for (let index = 0; index < DEMO_SAMPLES.length + 1; index++) {
    const sample = DEMO_SAMPLES[index % DEMO_SAMPLES.length];
    it(`#${index} ${sample.name}`, () => {
      const run = demoRun({ labId: 'demo-lab', analystId: 'demo-analyst', index, createdAt: new Date(Date.UTC(2026, 0, 1)) });
      const r = run.run.result as Result;
      const table = TABLE[sample.formula];
      expect(r.fit?.converged).toBe(true);
      // Noise σ 0.01 pH plus rounding to 0.01 (σ 0.003): a fit that matches the simulation leaves about 0.01.
      expect(r.fit!.rmse).toBeLessThan(0.015);
      expect(r.warnings.join(' ')).not.toMatch(/describes the curve poorly/);
      expect(Math.abs(r.pKaThermodynamic[0] - table.pKa)).toBeLessThan(0.01);
      // Within three standard uncertainties (k = 3) of the formula's molar mass.
      expect(Math.abs(r.molarMassGPerMol! - table.molarMass)).toBeLessThan(3 * r.molarMassU!);
      expect(run.run.isDemo).toBe(true);
      expect(run.run.sampleName).toMatch(/\(demo\)$/);
    });
  }
});
