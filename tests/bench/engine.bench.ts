// Engine benchmark: median time of analyzeRun for a typical 150-reading run and a 10,000-reading run, and the ratio
// of our whole-curve fit's time to scipy.optimize.least_squares on the same data and model (python3-scipy, which
// times its own fit loop). Figures as JSON lines on stdout (tests/bench/README.md); notes on stderr.
import { execFileSync, spawnSync } from 'node:child_process';
import { cpus, loadavg } from 'node:os';
import { fileURLToPath } from 'node:url';
import { analyzeRun } from '../../shared/engine/index';
import { fitProblem } from '../../shared/engine/crosscheck/payload';
import { syntheticRun } from '../../shared/engine/fixtures/synthetic';
import { runDocumentSchema } from '../../shared/schemas/run-document';

const median = (xs: number[]) => {
  const s = xs.slice().sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
};
let lastMin = NaN;
/** Median wall time (ms); the fastest run is kept in lastMin for the note (what an idle core gives). */
function time(f: () => unknown, runs: number, warm: number): number {
  for (let i = 0; i < warm; i++) f();
  const t: number[] = [];
  for (let i = 0; i < runs; i++) {
    const t0 = performance.now();
    f();
    t.push(performance.now() - t0);
  }
  lastMin = Math.min(...t);
  return median(t);
}
// wall-clock medians suffer when other work shares the cores: say how busy the machine was
const load = () => `fastest run ${lastMin.toFixed(2)} ms; load average ${loadavg()[0].toFixed(1)} on ${cpus().length} cores`;
const emit = (row: Record<string, unknown>) => process.stdout.write(`${JSON.stringify({ note: load(), ...row })}\n`);

// typical run: 25 mL of 0.1 M acetic acid, 150 hand-tapped readings to 1.6·Ve, Davies activity (the default)
const acetic = syntheticRun({ pKa: [4.756], concentrationM: 0.1, seed: 7, readings: 150, molarMassGPerMol: 60.052 }).doc;
const ms150 = time(() => analyzeRun(acetic as never), 60, 15);
emit({ figure: 'engine: analyse 150 readings, monoprotic (median)', value: ms150, unit: 'ms', goal: '<= 20', meetsGoal: ms150 <= 20 });

const phosphoric = syntheticRun({ pKa: [2.148, 7.198, 12.375], concentrationM: 0.05, lengthStep: 2, endFraction: 1.3, seed: 7, readings: 150 }).doc;
const msPoly = time(() => analyzeRun(phosphoric as never), 40, 10);
emit({ figure: 'engine: analyse 150 readings, triprotic (median)', value: msPoly, unit: 'ms', goal: '<= 20', meetsGoal: msPoly <= 20 });

const big = syntheticRun({ pKa: [4.756], concentrationM: 0.1, seed: 7, readings: 10_000 }).doc;
const parsedBig = runDocumentSchema.parse(big);
const ms10k = time(() => analyzeRun(parsedBig, { validated: true }), 7, 2);
emit({ figure: 'engine: analyse 10,000 readings, input already validated (median)', value: ms10k, unit: 'ms', note: `no goal; ${load()}` });

// our fit vs scipy least_squares ('lm', analytic Jacobian) on the same 150-reading problem
const problem = fitProblem(acetic);
const oursMs = time(() => problem.ours(), 60, 15);
const hasScipy = spawnSync('python3', ['-c', 'import scipy, numpy'], { stdio: 'ignore' }).status === 0;
if (!hasScipy) {
  process.stderr.write('scipy row skipped: python3 with scipy and numpy is not installed (Debian: apt-get install python3-scipy)\n');
  emit({ figure: 'engine: fit time / scipy least_squares', value: null, unit: 'ratio', goal: '<= 1.0', note: 'skipped: python3-scipy absent' });
} else {
  const script = fileURLToPath(new URL('../../shared/engine/crosscheck/scipy_fit.py', import.meta.url));
  // scipy with its own finite differences and with an analytic Jacobian: the faster of the two is the comparison.
  // Both stop at the same tolerance: ours stops when the relative step or cost change falls below 1e-10
  // (shared/engine/fit.ts), so scipy gets xtol = ftol = gtol = 1e-10, not the 1e-15 of the accuracy cross-check.
  const runs = (['2-point', 'analytic'] as const).map((jac) => {
    const out = JSON.parse(execFileSync('python3', [script], { input: JSON.stringify({ ...problem.payload, jac, repeat: 30, tol: 1e-10 }), encoding: 'utf8' }));
    return { jac, ms: median(out.seconds.slice(5)) * 1000, nfev: out.nfev as number, pKa: out.x[0] as number };
  });
  const best = runs[0].ms <= runs[1].ms ? runs[0] : runs[1];
  const scipyMs = best.ms;
  const f = problem.ours();
  for (const r of runs) process.stderr.write(`scipy least_squares (lm, jac ${r.jac}): ${r.ms.toFixed(3)} ms, ${r.nfev} evaluations, pKa ${r.pKa.toFixed(6)}\n`);
  process.stderr.write(`ours: ${oursMs.toFixed(3)} ms, ${f.iterations} iterations, pKa ${f.pKa[0].toFixed(6)}\n`);
  const ratio = oursMs / scipyMs;
  emit({
    figure: 'engine: fit time / scipy least_squares (same data, model, tolerance 1e-10)',
    value: ratio,
    unit: 'ratio',
    goal: '<= 1.0',
    meetsGoal: ratio <= 1.0,
    ratio,
    note: `ours ${oursMs.toFixed(2)} ms in ${f.iterations} iterations; scipy (jac ${best.jac}) ${scipyMs.toFixed(2)} ms in ${best.nfev} evaluations; ${load()}`,
  });
}
