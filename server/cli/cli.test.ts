// Spawns the command line as a user would: exactly one JSON object on stdout, problems on stderr, non-zero exit.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';

const root = resolve(__dirname, '../..');
const fixtures = join(root, 'shared/engine/fixtures');
const dir = mkdtempSync(join(tmpdir(), 'halfmark-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function cli(...args: string[]) {
  const r = spawnSync(join(root, 'node_modules/.bin/tsx'), [join(root, 'server/cli/main.ts'), ...args], { cwd: root, encoding: 'utf8' });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}
function file(name: string, body: string) {
  const p = join(dir, name);
  writeFileSync(p, body);
  return p;
}

describe('npm run cli', () => {
  it('analyze prints one JSON object for the demo run; its Ve is the invented amount c·V0/Cb within 0.3 %', () => {
    const r = cli('analyze', join(fixtures, 'demo-run.json'));
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout.trim().split('\n')).toHaveLength(1);
    const out = JSON.parse(r.stdout);
    // the demo was generated (shared/engine/fixtures/synthetic.ts) from 25 mL of 0.0832 M acid and 0.1021 M titrant
    const trueVe = (0.0832 * 25) / 0.1021;
    expect(Math.abs(out.equivalencePoints[0].volumeMl / trueVe - 1)).toBeLessThan(0.003);
    for (const key of ['equivalencePoints', 'halfEquivalence', 'pKa', 'pKaU', 'Ka', 'molarMassGPerMol', 'molarMassU', 'analyteConcentrationM', 'methods', 'warnings']) expect(out).toHaveProperty(key);
    // invented from acetic acid, pKa 4.756 (CRC-style table) and M = 60.052 g/mol (CIAAW, computed)
    expect(Math.abs(out.pKaThermodynamic[0] - 4.756)).toBeLessThan(0.03);
    expect(Math.abs(out.molarMassGPerMol / 60.052 - 1)).toBeLessThan(0.005);
    expect(r.stderr).toBe('');
  });

  it('analyze of a run that stopped early still answers, with no equivalence point and a warning', () => {
    const r = cli('analyze', join(fixtures, 'demo-run-stopped-early.json'));
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.equivalencePoints).toEqual([]);
    expect(out.warnings.join(' ')).toMatch(/continue past pH ~9/);
  });

  it('analyze of bad input exits non-zero, names each problem on stderr and prints nothing on stdout', () => {
    const doc = JSON.parse(readFileSync(join(fixtures, 'demo-run.json'), 'utf8'));
    delete doc.titrant.concentrationM;
    doc.readings[3].pH = 99;
    const r = cli('analyze', file('bad.json', JSON.stringify(doc)));
    expect(r.code).toBe(65);
    expect(r.stdout).toBe('');
    expect(r.stderr).toMatch(/titrant\.concentrationM: titrant\.concentrationM is required/);
    expect(r.stderr).toMatch(/readings\.3\.pH: reading pH must be between -2 and 16/);
  });

  it('refuses a file that is not JSON', () => {
    const notJson = cli('analyze', file('x.json', '{"sample": '));
    expect(notJson.code).toBe(65);
    expect(notJson.stderr).toMatch(/not valid JSON/);
  });
  it('refuses a missing file', () => {
    const r = cli('analyze', join(dir, 'missing.json'));
    expect(r.code).toBe(65);
    expect(r.stderr).toMatch(/cannot read/);
  });
  it('refuses an unknown command and lists the known ones', () => {
    const unknown = cli('frobnicate', 'x.json');
    expect(unknown.code).toBe(64);
    expect(unknown.stderr).toMatch(/unknown command[\s\S]*analyze\|drip-rate\|electrode\|simulate\|standardize/);
  });

  it('simulate gives equivalence volumes j·n/Cb (phosphoric, 25 mL of 0.05 M with 0.1 M NaOH → 12.5, 25, 37.5 mL) and times at the drip rate', () => {
    const r = cli('simulate', join(fixtures, 'simulate-phosphoric.json'));
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.equivalence.map((e: { volumeMl: number }) => e.volumeMl)).toEqual([12.5, 25, 37.5].map((v) => expect.closeTo(v, 10)));
    // drain model: t = −(Vh/q0) ln(1 − V/Vh)
    expect(out.equivalence[0].timeS).toBeCloseTo((-95 / 0.05) * Math.log(1 - 12.5 / 95), 8);
  });

  it('standardize reproduces Eurachem/CITAC QUAM example A2: 0.10214 mol/L, u 0.00010 mol/L', () => {
    const r = cli('standardize', join(fixtures, 'standardize-quam-a2.json'));
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.concentrationM).toBeCloseTo(0.10214, 5);
    expect(out.uConcentrationM).toBeCloseTo(0.0001, 5);
  });
});
