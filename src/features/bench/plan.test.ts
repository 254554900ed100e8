import { describe, expect, it } from 'vitest';
import { cueIntervalS, planRun } from './plan';
import type { RunSetup } from './setup';

// OpenStax Chemistry 2e §14.7 worked example: 25.00 mL of 0.100 M acetic acid with 0.100 M NaOH → Ve 25.00 mL,
// pH 8.72 at equivalence (see shared/reference/check-values.md).
const setup: RunSetup = {
  label: 'acetic check',
  sample: { volumeMl: 25, estConcentrationM: 0.1, estPKa: [4.74] },
  titrant: { source: 'manual', concentrationM: 0.1 },
  delivery: { source: 'manual', rateMlPerS: 0.05, startBuretteMl: 0 },
};

describe('planRun', () => {
  it('predicts the break time from the equivalence volume and the drip rate (OpenStax 2e §14.7: Ve 25.00 mL)', () => {
    const r = planRun(setup);
    if (!r.ok) throw new Error(r.reason);
    expect(r.plan.equivalence[0].volumeMl).toBeCloseTo(25, 6);
    expect(r.plan.equivalence[0].timeS).toBeCloseTo(500, 6); // 25 mL / 0.05 mL/s
    expect(r.plan.suggestedTotalS).toBeCloseTo(750, 6); // 1.5 × Ve (common practice)
    // Cadence: 500 s / 40 readings = 12.5 → 13 s; near the break a third of that (common practice).
    expect(r.plan.cadenceS).toBe(13);
    expect(r.plan.cadenceNearBreakS).toBe(4);
  });

  it('draws the engine curve through the textbook pH values (OpenStax 2e §14.7: 2.87 at 0 mL, 4.74 at 12.5 mL)', () => {
    // The example's Ka is 1.8e-5 (4.74 is its rounding). check-values.md gives the exact charge-balance model for it
    // to 3 decimals (de Levie 1993, computed): 2.875 at 0 mL, 4.745 at 12.5 mL; the textbook rounds them to 2.87, 4.74.
    const r = planRun({ ...setup, sample: { ...setup.sample, estPKa: [-Math.log10(1.8e-5)] } });
    if (!r.ok || !r.plan.curve) throw new Error('no curve');
    const curve = r.plan.curve;
    // pH at volume v, linear between the two curve points around it (pH(V) is straight near half-equivalence).
    const pHAt = (v: number) => {
      const k = curve.findIndex((p) => p.volumeMl >= v);
      if (k < 0) throw new Error(`no point at ${v} mL`);
      if (k === 0 || curve[k].volumeMl === v) return curve[k].pH;
      const [a, b] = [curve[k - 1], curve[k]];
      return a.pH + ((b.pH - a.pH) * (v - a.volumeMl)) / (b.volumeMl - a.volumeMl);
    };
    expect(curve[0]).toMatchObject({ volumeMl: 0, timeS: 0 });
    expect(pHAt(0)).toBeCloseTo(2.875, 3);
    expect(pHAt(12.5)).toBeCloseTo(4.745, 3);
    expect(curve[curve.length - 1].volumeMl).toBeCloseTo(37.5, 6);
  });

  it('plans from mass and an estimated molar mass (KHP 204.2223 g/mol, CIAAW): 0.4084 g → 2.000 mmol → 20.00 mL of 0.1 M', () => {
    const r = planRun({ ...setup, sample: { volumeMl: 50, massG: 0.40844, estMolarMassGPerMol: 204.2223 } });
    if (!r.ok) throw new Error(r.reason);
    // Ve = m / M / c: 0.40844 g / 204.2223 g/mol = 1.99998 mmol → 19.9998 mL, known far better than the 20.00 shown.
    expect(r.plan.equivalence[0].volumeMl).toBeCloseTo((0.40844 / 204.2223) * 1000 / 0.1, 9);
    expect(r.plan.notes.join(' ')).toMatch(/assumes pKa/);
  });

  it('says what is missing instead of guessing the amount', () => {
    const r = planRun({ ...setup, sample: { volumeMl: 25 } });
    expect(r).toMatchObject({ ok: false, reason: expect.stringMatching(/estimated molar mass/) });
  });

  it('warns when the run needs more than one 50 mL burette', () => {
    const r = planRun({ ...setup, delivery: { ...setup.delivery, startBuretteMl: 20 } });
    if (!r.ok) throw new Error(r.reason);
    expect(r.plan.notes.join(' ')).toMatch(/refill/);
  });

  it('tightens the cue near the predicted break', () => {
    const r = planRun(setup);
    if (!r.ok) throw new Error(r.reason);
    expect(cueIntervalS(r.plan, 100)).toBe(13);
    expect(cueIntervalS(r.plan, 480)).toBe(4);
    expect(cueIntervalS(r.plan, 700)).toBe(13);
  });
});
