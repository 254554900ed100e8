import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { ChargeBalanceModel } from './model';
import { simulateCurve } from './simulate';

describe('exact charge-balance model (de Levie, J. Chem. Educ. 70 (1993) 209)', () => {
  it('reproduces the OpenStax Chemistry 2e §14.7 acetic acid curve (25.00 mL 0.100 M, Ka 1.8e-5, 0.100 M NaOH, pKw 14.00)', () => {
    const m = new ChargeBalanceModel({ sampleVolumeMl: 25, titrantM: 0.1, pKw: 14, activity: 'none' });
    m.setPKa([-Math.log10(1.8e-5)]);
    // OpenStax: 2.87, 4.74, 8.72, 12.52; exact model computed in check-values.md: 2.875, 4.745, 8.722, 12.523
    const at = (v: number) => m.pHAt(v, 2.5);
    expect(at(0)).toBeCloseTo(2.875, 3);
    expect(at(12.5)).toBeCloseTo(4.745, 3);
    expect(at(25)).toBeCloseTo(8.722, 3);
    expect(at(50)).toBeCloseTo(12.523, 3);
    expect(Math.abs(at(0) - 2.87)).toBeLessThan(0.01);
    expect(Math.abs(at(12.5) - 4.74)).toBeLessThan(0.01);
    expect(Math.abs(at(25) - 8.72)).toBeLessThan(0.01);
    expect(Math.abs(at(50) - 12.52)).toBeLessThan(0.01);
  });

  it('reproduces the lactic acid textbook values (25.0 mL 0.100 M, pKa 3.86, 0.100 M NaOH; check-values.md computed 2.438, 3.864, 8.280)', () => {
    const m = new ChargeBalanceModel({ sampleVolumeMl: 25, titrantM: 0.1, pKw: 14, activity: 'none' });
    m.setPKa([3.86]);
    expect(m.pHAt(0, 2.5)).toBeCloseTo(2.438, 3);
    expect(m.pHAt(12.5, 2.5)).toBeCloseTo(3.864, 3);
    expect(m.pHAt(25, 2.5)).toBeCloseTo(8.28, 3);
  });

  it('V(pH(V)) = V over wide ranges of pKa, concentrations, volume, activity and carbonate (property; de Levie explicit form)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: 1.5, max: 12, noNaN: true }), { minLength: 1, maxLength: 3 }),
        fc.double({ min: 1e-3, max: 0.2, noNaN: true }),
        fc.double({ min: 1e-3, max: 0.5, noNaN: true }),
        fc.double({ min: 5, max: 100, noNaN: true }),
        fc.double({ min: 0.01, max: 2.5, noNaN: true }),
        fc.boolean(),
        fc.constantFrom(0, 0.002),
        fc.integer({ min: 0, max: 60 }),
        (pk, ca, cb, v0, frac, davies, carb, t) => {
          const pKa = pk.slice().sort((a, b) => a - b);
          const m = new ChargeBalanceModel({ sampleVolumeMl: v0, titrantM: cb, carbonateM: carb * cb, temperatureC: t, activity: davies ? 'davies' : 'none' });
          m.setPKa(pKa);
          const amount = ca * v0;
          const V = frac * ((pKa.length * amount) / cb);
          const ph = m.pHAt(V, amount);
          const back = m.volumeAtPH(ph, amount);
          // pH is solved to ~1e-11; on the flattest parts of a curve that moves V by at most ~1e-7 relative
          expect(Math.abs(back - V)).toBeLessThanOrEqual(1e-6 * (1 + V));
        },
      ),
      { numRuns: 400, seed: 20261201 },
    );
  });

  it('pH rises with added base (monotone curve) for a triprotic acid (phosphoric, Kaye & Laby 2.148/7.198/12.375)', () => {
    const { points } = simulateCurve({ sample: { volumeMl: 25, concentrationM: 0.05 }, acid: { pKa: [2.148, 7.198, 12.375] }, titrant: { concentrationM: 0.1 }, activity: 'davies', maxVolumeMl: 50, stepMl: 0.1 });
    for (let i = 1; i < points.length; i++) expect(points[i].pH).toBeGreaterThan(points[i - 1].pH);
  });

  it('Davies: at half-equivalence of 0.1 M acetic acid the measured pH sits below the thermodynamic pKa by about A·f(I) (Davies equation)', () => {
    const m = new ChargeBalanceModel({ sampleVolumeMl: 25, titrantM: 0.1, activity: 'davies', temperatureC: 25 });
    m.setPKa([4.756]);
    const ph = m.pHAt(12.5, 2.5);
    const I = m.ionicStrength;
    const s = Math.sqrt(I);
    const shift = 0.5115 * (s / (1 + s) - 0.3 * I); // A(25 °C) = 0.5115 (Manov et al. 1943, memory)
    expect(I).toBeGreaterThan(0.03);
    expect(I).toBeLessThan(0.04);
    // [HA] ≈ [A−] at half-equivalence, so pH ≈ pKa − shift within the small [H+] correction
    expect(ph).toBeCloseTo(4.756 - shift, 2);
  });

  it('carbonate in the titrant lowers the pH after equivalence (it is a weaker base than hydroxide)', () => {
    const clean = new ChargeBalanceModel({ sampleVolumeMl: 25, titrantM: 0.1, activity: 'none' });
    const dirty = new ChargeBalanceModel({ sampleVolumeMl: 25, titrantM: 0.1, carbonateM: 0.005, activity: 'none' });
    clean.setPKa([4.756]);
    dirty.setPKa([4.756]);
    expect(dirty.pHAt(30, 2.5)).toBeLessThan(clean.pHAt(30, 2.5) - 0.01);
  });
});

describe('analytic Jacobian of the model (implicit differentiation)', () => {
  for (const activity of ['none', 'davies'] as const) {
    it(`matches central finite differences (${activity}, triprotic phosphoric constants, across the curve)`, () => {
      const pKa = [2.148, 7.198, 12.375];
      const amount = 1.25;
      const m = new ChargeBalanceModel({ sampleVolumeMl: 25, titrantM: 0.1, activity });
      const g = new Float64Array(4);
      for (const V of [0.5, 6, 12.5, 18, 24.9, 31, 40]) {
        m.setPKa(pKa);
        m.pHAt(V, amount);
        m.gradient(V, g);
        for (let k = 0; k < 3; k++) {
          const d = 1e-5;
          const up = pKa.slice();
          const dn = pKa.slice();
          up[k] += d;
          dn[k] -= d;
          m.setPKa(up);
          const a = m.pHAt(V, amount);
          m.setPKa(dn);
          const b = m.pHAt(V, amount);
          expect(g[k]).toBeCloseTo((a - b) / (2 * d), 5);
        }
        m.setPKa(pKa);
        const d = 1e-6;
        const fd = (m.pHAt(V, amount + d) - m.pHAt(V, amount - d)) / (2 * d);
        expect(g[3]).toBeCloseTo(fd, 4);
      }
    });
  }
});
