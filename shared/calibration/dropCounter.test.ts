import { describe, expect, it } from 'vitest';
import { countDrops, TYPICAL_DROP_VOLUME_ML } from './dropCounter';

describe('drop counter', () => {
  it('tap times: n taps bound n − 1 drop intervals', () => {
    const r = countDrops({ tapTimesS: [0, 1.5, 3.0, 4.5, 6.0] });
    expect(r.drops).toBe(4);
    expect(r.dropsPerMin).toBeCloseTo(40, 10);
  });
  it('count over an interval, with a gravimetric rate → drop volume; ≈0.05 mL shown as common practice', () => {
    const r = countDrops({ drops: 30, intervalS: 60, rateMlPerS: 0.025 });
    expect(r.dropsPerMin).toBe(30);
    expect(r.dropVolumeMl).toBeCloseTo(0.05, 12); // 1.5 mL/min ÷ 30 drops/min
    expect(r.dropsPerMl).toBeCloseTo(20, 10);
    expect(TYPICAL_DROP_VOLUME_ML).toBe(0.05);
    expect(r.notes[0]).toMatch(/common practice/);
  });
  it('rejects bad input', () => {
    expect(() => countDrops({ tapTimesS: [0, 2, 1] })).toThrow(/tap times must increase/);
    expect(() => countDrops({ drops: 10 })).toThrow(/go together/);
    expect(() => countDrops({})).toThrow(/either tapTimesS/);
    expect(() => countDrops({ drops: 10, intervalS: 0 })).toThrow(/intervalS must be greater than zero/);
  });
});
