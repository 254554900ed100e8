import { describe, expect, it } from 'vitest';
import { ago, num, withU } from './format';

describe('desk number format', () => {
  // GUM (JCGM 100:2008) 7.2.6: uncertainties to at most two significant digits, the value rounded to match.
  it('rounds the value to the uncertainty’s two significant figures', () => {
    expect(withU(19.72741, 0.04918, 'mL')).toBe('19.727 ± 0.049 mL');
    expect(withU(122.1234, 1.234, 'g/mol')).toBe('122.1 ± 1.2 g/mol');
    expect(withU(4.2, null)).toBe('4.2');
  });
  it('shows a dash for missing values', () => {
    expect(num(null)).toBe('—');
    expect(withU(Number.NaN, 1)).toBe('—');
  });
  it('says how long ago in seconds, then minutes, then hours; never negative', () => {
    expect(ago(4_400)).toBe('4 s');
    expect(ago(89_000)).toBe('89 s');
    expect(ago(95_000)).toBe('2 min');
    expect(ago(89 * 60_000)).toBe('89 min');
    expect(ago(3 * 3_600_000)).toBe('3 h');
    expect(ago(-2_000)).toBe('0 s');
  });
});
