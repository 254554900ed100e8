import { describe, expect, it } from 'vitest';
import { combineStandardisations, recordStatuses } from './records';

const day = 86_400_000;
const now = new Date('2026-03-10T12:00:00Z');
const at = (d: number) => new Date(now.getTime() + d * day).toISOString();

describe('recordStatuses (in force = latest accepted, unexpired, not withdrawn)', () => {
  it('picks the latest valid record and keeps older valid ones as superseded', () => {
    const { statuses, inForceId } = recordStatuses(
      [
        { id: 'a', performedAt: at(-10), expiresAt: at(20), accepted: true, withdrawnAt: null },
        { id: 'b', performedAt: at(-2), expiresAt: at(28), accepted: true, withdrawnAt: null },
        { id: 'c', performedAt: at(-1), expiresAt: at(29), accepted: false, withdrawnAt: null },
        { id: 'd', performedAt: at(-40), expiresAt: at(-10), accepted: true, withdrawnAt: null },
        { id: 'e', performedAt: at(-0.5), expiresAt: at(29), accepted: true, withdrawnAt: at(-0.1) },
      ],
      now,
    );
    expect(inForceId).toBe('b');
    expect(Object.fromEntries(statuses)).toEqual({ a: 'superseded', b: 'in-force', c: 'failed', d: 'expired', e: 'withdrawn' });
  });

  it('has nothing in force when every record expired', () => {
    const r = recordStatuses([{ id: 'x', performedAt: at(-31), expiresAt: at(-1), accepted: true, withdrawnAt: null }], now);
    expect(r.inForceId).toBeNull();
  });

  it('expiry is exclusive: a record expiring now is expired', () => {
    const r = recordStatuses([{ id: 'x', performedAt: at(-1), expiresAt: now.toISOString(), accepted: true, withdrawnAt: null }], now);
    expect(r.statuses.get('x')).toBe('expired');
  });
});

describe('combineStandardisations (GUM, JCGM 100:2008)', () => {
  it('one replicate keeps its own u', () => {
    const c = combineStandardisations([{ id: 'a', concentrationM: 0.10214, uConcentrationM: 0.0001, uSharedRel: 0.0003, expiresAt: at(5) }]);
    expect(c).toMatchObject({ concentrationM: 0.10214, uConcentrationM: 0.0001, n: 1 });
  });

  it('the mean of replicates; scatter larger than the budgets dominates the random part', () => {
    const reps = [0.1010, 0.1020, 0.1030].map((c, i) => ({ id: String(i), concentrationM: c, uConcentrationM: 0.00005, uSharedRel: 0.0003, expiresAt: at(5 + i) }));
    const c = combineStandardisations(reps)!;
    expect(c.concentrationM).toBeCloseTo(0.102, 12);
    expect(c.sdM).toBeCloseTo(0.001, 12);
    // u² = (0.102·0.0003)² + (0.001/√3)²  (computed by hand from the formula)
    expect(c.uConcentrationM).toBeCloseTo(Math.hypot(0.102 * 0.0003, 0.001 / Math.sqrt(3)), 12);
    expect(c.validUntil).toBe(at(5));
  });

  it('two replicates that agree by chance cannot shrink u below their own random budget / √n', () => {
    const reps = [0, 1].map((i) => ({ id: String(i), concentrationM: 0.1, uConcentrationM: 0.0001, uSharedRel: 0.0003, expiresAt: at(5) }));
    const c = combineStandardisations(reps)!;
    const ownRandom = Math.sqrt(0.0001 ** 2 - (0.1 * 0.0003) ** 2);
    expect(c.uConcentrationM).toBeCloseTo(Math.hypot(0.1 * 0.0003, ownRandom / Math.sqrt(2)), 12);
    expect(c.uConcentrationM).toBeLessThan(0.0001);
  });

  it('no replicates: no concentration', () => expect(combineStandardisations([])).toBeNull());
});

describe('recordStatuses tie-break', () => {
  it('two records performed in the same second: the later stored is in force', () => {
    const r = recordStatuses(
      [
        { id: 'z', performedAt: at(-1), createdAt: at(-1), expiresAt: at(5), accepted: true, withdrawnAt: null },
        { id: 'a', performedAt: at(-1), createdAt: at(-0.9), expiresAt: at(5), accepted: true, withdrawnAt: null },
      ],
      now,
    );
    expect(r.inForceId).toBe('a');
  });
});
