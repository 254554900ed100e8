import { describe, expect, it } from 'vitest';
import { issuesByField, numberOrUndefined, runSetupSchema, setupWarnings, type RunSetup } from './setup';

const base: RunSetup = {
  label: 'benzoic',
  sample: { volumeMl: 50, massG: 0.2 },
  titrant: { source: 'manual', concentrationM: 0.1 },
  delivery: { source: 'manual', rateMlPerS: 0.05, startBuretteMl: 0 },
  temperatureC: 22,
};

describe('run setup', () => {
  it('accepts a complete manual setup', () => {
    expect(runSetupSchema.safeParse(base).success).toBe(true);
  });
  it('names the field and the unit in its messages', () => {
    const r = runSetupSchema.safeParse({ ...base, label: ' ', titrant: { source: 'manual', concentrationM: -1 }, delivery: { ...base.delivery, rateMlPerS: Number.NaN } });
    expect(r.success).toBe(false);
    const f = issuesByField(r.error!);
    expect(f.label).toMatch(/name/);
    expect(f['titrant.concentrationM']).toBe('Must be greater than zero (mol/L)');
    expect(f['delivery.rateMlPerS']).toMatch(/^Must be a finite number \(mL\/s\)/);
  });
  it('warns for a manual rate and titrant and a stale electrode calibration', () => {
    const now = Date.UTC(2026, 0, 2, 12);
    const w = setupWarnings({ ...base, electrode: { source: 'manual', slopeMvPerPH: -59, offsetMv: 2, temperatureC: 25, calibratedAtMs: now - 30 * 3_600_000 } }, now);
    expect(w.join('\n')).toMatch(/Drip rate typed by hand/);
    expect(w.join('\n')).toMatch(/Titrant concentration typed by hand/);
    expect(w.join('\n')).toMatch(/30 h old/);
  });
  it('reads form numbers, with a comma as decimal separator', () => {
    expect(numberOrUndefined('')).toBeUndefined();
    expect(numberOrUndefined('0,05')).toBe(0.05);
    expect(numberOrUndefined('abc')).toBeNaN();
  });
});
