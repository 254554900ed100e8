import { describe, expect, it } from 'vitest';
import { sci, withU } from './format';

describe('result formatting (GUM 7.2.6: uncertainty to at most two significant digits)', () => {
  it('rounds value and uncertainty to the same decimal', () => {
    expect(withU(18.6412, 0.0132, 'mL')).toBe('18.641 ± 0.013 mL');
    expect(withU(4.7562, 0.021)).toBe('4.756 ± 0.021');
    expect(withU(122.1, 1.4, 'g/mol')).toBe('122.1 ± 1.4 g/mol');
  });
  it('shows a dash for a missing value', () => {
    expect(withU(null, 0.1)).toBe('—');
  });
  it('writes Ka in scientific notation', () => {
    expect(sci(1.754e-5, 0.08e-5)).toBe('(1.75 ± 0.08) × 10^-5');
  });
});
