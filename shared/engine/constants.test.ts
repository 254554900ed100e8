import { describe, expect, it } from 'vitest';
import { FORMULAS, molarMass, pKw } from './constants';

describe('pKw (CRC Handbook 86th ed. p. 8-79, Marshall & Franck 1981)', () => {
  it('returns the table values at the table temperatures', () => {
    const table: [number, number][] = [[0, 14.938], [10, 14.528], [20, 14.163], [25, 13.995], [30, 13.836], [40, 13.542], [50, 13.275], [60, 13.034]];
    for (const [t, v] of table) expect(pKw(t)).toBeCloseTo(v, 6);
  });
  it('interpolates smoothly between them and refuses temperatures outside 0–60 °C', () => {
    const v = pKw(22);
    expect(v).toBeLessThan(14.163);
    expect(v).toBeGreaterThan(13.995);
    // the table is convex; quadratic interpolation lies below the straight line between 20 and 25 °C
    expect(v).toBeLessThan(14.163 + ((13.995 - 14.163) * 2) / 5);
    expect(() => pKw(-1)).toThrow(RangeError);
    expect(() => pKw(61)).toThrow(RangeError);
  });
});

describe('molar masses from CIAAW conventional atomic weights (check-values.md, computed)', () => {
  it('KHP 204.2223, NaOH 39.9968, acetic acid 60.0520, benzoic acid 122.1230 g/mol', () => {
    expect(molarMass(FORMULAS.KHP)).toBeCloseTo(204.2223, 4);
    expect(molarMass(FORMULAS.NaOH)).toBeCloseTo(39.9968, 4);
    expect(molarMass(FORMULAS.aceticAcid)).toBeCloseTo(60.052, 4);
    expect(molarMass(FORMULAS.benzoicAcid)).toBeCloseTo(122.123, 4);
  });
  it('rejects formulas it cannot read', () => {
    expect(() => molarMass('C8H5Xx')).toThrow(/unknown element/);
    expect(() => molarMass('c8')).toThrow(/cannot read/);
  });
});
