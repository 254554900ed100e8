import { describe, expect, it } from 'vitest';
import { buretteTolerance, describeBurette } from './buretteTolerance';

describe('burette tolerance table (labels as in check-values.md)', () => {
  it.each([
    [50, 'A', 0.05, 'ISO 385:2005, ASTM E287'],
    [50, 'B', 0.1, 'ISO 385:2005, ASTM E287'],
    [25, 'A', 0.03, 'memory'],
    [10, 'A', 0.02, 'memory'],
  ] as const)('%s mL class %s → ±%s mL (%s)', (cap, cls, tol, src) => {
    expect(buretteTolerance(cap, cls)).toEqual({ capacityMl: cap, class: cls, toleranceMl: tol, source: src });
  });
  it('has no row it has no source for (e.g. 25 mL class B)', () => {
    expect(buretteTolerance(25, 'B')).toBeUndefined();
    expect(describeBurette({ identifier: 'B-07', capacityMl: 25, class: 'B' }).toleranceMl).toBeNull();
  });
  it('validates a burette', () => {
    expect(describeBurette({ identifier: 'B-01', capacityMl: 50, class: 'A' }).toleranceMl).toBe(0.05);
    expect(() => describeBurette({ identifier: ' ', capacityMl: 50, class: 'A' })).toThrow(/identifier is required/);
    expect(() => describeBurette({ identifier: 'x', capacityMl: 50, class: 'C' } as never)).toThrow(/class must be A or B/);
  });
});
