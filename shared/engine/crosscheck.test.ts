// Cross-checks of the whole-curve fit against general-purpose optimisers outside the project, on the same data,
// weights and model: scipy.optimize.least_squares (Debian python3-scipy, MINPACK Levenberg–Marquardt) through a
// child process, and the npm package ml-levenberg-marquardt.
import { execFileSync, spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import { describe, expect, it } from 'vitest';
import { analyzeRun } from './analyze';
import { fitProblem } from './crosscheck/payload';
import { syntheticRun } from './fixtures/synthetic';
import { ChargeBalanceModel } from './model';

const script = fileURLToPath(new URL('./crosscheck/scipy_fit.py', import.meta.url));
const hasScipy = spawnSync('python3', ['-c', 'import scipy, numpy'], { stdio: 'ignore' }).status === 0;
if (!hasScipy) console.warn('skipping the scipy cross-check: python3 with scipy and numpy is not installed (Debian: apt-get install python3-scipy)');

describe('fit cross-check', () => {
  // CI installs python3-scipy (.ci/run): there the cross-check must run, not skip quietly.
  it.runIf(Boolean(process.env.CI))('scipy is available in CI', () => expect(hasScipy).toBe(true));
  const cases = [
    { name: 'acetic acid, Davies activity', spec: { pKa: [4.756], concentrationM: 0.1, seed: 31 } },
    { name: 'stronger weak acid (phthalic pKa1 2.95), Davies', spec: { pKa: [2.95], concentrationM: 0.05, seed: 32 } },
    { name: 'benzoic acid, no activity correction', spec: { pKa: [4.204], concentrationM: 0.02, seed: 33, activity: 'none' as const } },
  ];
  for (const c of cases) {
    it.skipIf(!hasScipy)(`${c.name}: same pKa and Ve as scipy.optimize.least_squares (finite-difference Jacobian) within 1e-4`, () => {
      const { payload, ours } = fitProblem(syntheticRun(c.spec).doc);
      const out = JSON.parse(execFileSync('python3', [script], { input: JSON.stringify(payload), encoding: 'utf8' }));
      const f = ours();
      expect(f.converged).toBe(true);
      expect(Math.abs(f.pKa[0] - out.x[0])).toBeLessThan(1e-4);
      expect(Math.abs(f.ve1Ml - out.x[1])).toBeLessThan(1e-4);
      // and both sit at the same minimum
      expect(f.weightedCost).toBeCloseTo(out.cost, 9);
    });
  }

  it.skipIf(!hasScipy)('triprotic phosphoric acid with Davies activity (Kaye & Laby constants): same three pKa within 1e-4', () => {
    const sim = syntheticRun({ pKa: [2.148, 7.198, 12.375], concentrationM: 0.05, lengthStep: 2, endFraction: 1.3, seed: 35 });
    const { payload, ours } = fitProblem(sim.doc, 3, sim.trueVeMl[0] * 1.01);
    const out = JSON.parse(execFileSync('python3', [script], { input: JSON.stringify(payload), encoding: 'utf8' }));
    const f = ours();
    expect(f.converged).toBe(true);
    for (let k = 0; k < 3; k++) expect(Math.abs(f.pKa[k] - out.x[k])).toBeLessThan(1e-4);
    expect(Math.abs(f.ve1Ml - out.x[3])).toBeLessThan(1e-4);
  });

  it('analyzeRun reports the same fit as the cross-checked problem', () => {
    const { doc } = syntheticRun(cases[0].spec);
    const f = fitProblem(doc).ours();
    const r = analyzeRun(doc as never);
    expect(r.pKaThermodynamic[0]).toBeCloseTo(f.pKa[0], 6); // different starts converge to the same minimum within ~1e-8
    expect(r.fit!.equivalenceVolumesMl[0]).toBeCloseTo(f.ve1Ml, 6);
  });

  it('ml-levenberg-marquardt (npm, numerical Jacobian) reaches the same pKa within 1e-4 (acetic acid, no activity)', () => {
    const { payload, ours } = fitProblem(syntheticRun({ pKa: [4.756], concentrationM: 0.1, seed: 34, activity: 'none' }).doc);
    const f = ours();
    const model = new ChargeBalanceModel({ sampleVolumeMl: payload.V0, titrantM: payload.Cb, activity: 'none' });
    // ml-levenberg-marquardt fits y = f(x) unweighted; scale both sides by √w so its residuals are ours
    const sw = payload.w.map(Math.sqrt);
    const idx = payload.V.map((_, i) => i);
    const res = levenbergMarquardt(
      { x: idx, y: payload.pH.map((y, i) => y * sw[i]) },
      ([pKa, ve1]: number[]) => (i: number) => {
        model.setPKa([pKa]);
        return model.pHAt(payload.V[i], payload.Cb * ve1) * sw[i];
      },
      { initialValues: payload.start, damping: 1e-2, gradientDifference: 1e-7, maxIterations: 500, errorTolerance: 1e-14, improvementThreshold: 1e-14, centralDifference: true },
    );
    expect(Math.abs(res.parameterValues[0] - f.pKa[0])).toBeLessThan(1e-4);
    expect(Math.abs(res.parameterValues[1] - f.ve1Ml)).toBeLessThan(1e-3);
  });
});
