// Spawns the CLI as a user would: one JSON object on stdout, errors on stderr with a non-zero exit.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { dripRate } from './commands/drip-rate';
import { electrode } from './commands/electrode';

const root = resolve(__dirname, '../..');
const main = join(root, 'server/cli/main.ts');
const dir = mkdtempSync(join(tmpdir(), 'halfmark-cal-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function cli(command: string, body: unknown) {
  const file = join(dir, `${command}-${Math.random().toString(36).slice(2)}.json`);
  writeFileSync(file, typeof body === 'string' ? body : JSON.stringify(body));
  const r = spawnSync(join(root, 'node_modules/.bin/tsx'), [main, command, file], { cwd: root, encoding: 'utf8' });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

describe('calibration CLI commands', () => {
  it('drip-rate: one delivery at 20 °C → V = m·Z with Z = 1.002851 mL/g (ISO 4787 form, computed; check-values.md)', () => {
    const r = cli('drip-rate', { massG: 10, durationS: 200, waterTempC: 20 });
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.volumeMl).toBeCloseTo(10.02851, 5);
    expect(out.rateMlPerS).toBeCloseTo(10.02851 / 200, 7);
    expect(out.uRateMlPerS).toBeGreaterThan(0);
  });

  it('electrode: KHP and phosphate at 25 °C → slope % of Nernst 59.159 mV/pH (CODATA 2018) and offset at pH 7', () => {
    // By hand: S = −166.0/(6.865 − 4.005) = −58.042 mV/pH → 98.11 %; E(7) = 5.0 − 58.042·0.135 = −2.84 mV.
    const r = cli('electrode', { temperatureC: 25, points: [{ pH: 4.005, mV: 171 }, { pH: 6.865, mV: 5 }] });
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.slopePct).toBeCloseTo(98.11, 1);
    expect(out.offsetMv).toBeCloseTo(-2.84, 1);
    expect(out.accepted).toBe(true);
  });

  // Each spawn costs seconds (tsx start-up), so only one bad input per command goes through the process.
  it.each([
    ['drip-rate', { massG: -1, durationS: 100, waterTempC: 20 }, /massG must be greater than zero/],
    ['electrode', { temperatureC: 25, points: [{ pH: 7, mV: 1 }, { pH: 7, mV: 3 }] }, /same pH/],
  ])('%s rejects bad input on stderr with a non-zero exit (%#)', (cmd, body, msg) => {
    const r = cli(cmd, body);
    expect(r.code).not.toBe(0);
    expect(r.stdout.trim()).toBe('');
    expect(r.stderr).toMatch(msg);
  });

  it('rejects a file that is not JSON', () => {
    const r = cli('drip-rate', '{ not json');
    expect(r.code).not.toBe(0);
    expect(r.stdout.trim()).toBe('');
    expect(r.stderr.length).toBeGreaterThan(0);
  });
});

describe('calibration command handlers (in process)', () => {
  it('drip-rate: {deliveries, maxRelSdPct} adds the repeatability verdict', () => {
    const deliveries = [
      { massG: 10.012, durationS: 200.0, waterTempC: 21.5 },
      { massG: 9.987, durationS: 199.4, waterTempC: 21.5 },
    ];
    const out = dripRate({ deliveries, maxRelSdPct: 1 }) as { n: number; sdRateMlPerS: number; acceptance: { accepted: boolean } };
    expect(out.n).toBe(2);
    expect(out.sdRateMlPerS).toBeGreaterThan(0);
    expect(out.acceptance.accepted).toBe(true);
    expect(() => dripRate([{ massG: 1, durationS: 0, waterTempC: 20 }])).toThrow(/durationS must be greater than zero/);
    expect(() => dripRate('nonsense')).toThrow(/expected a delivery/);
  });
  it('electrode: fewer than 2 points is refused', () => {
    expect(() => electrode({ temperatureC: 25, points: [{ pH: 4, mV: 170 }] })).toThrow(/at least 2 buffer points/);
  });
});
