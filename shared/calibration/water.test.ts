import { describe, expect, it } from 'vitest';
import { waterDensityKgM3, waterDensityWarning } from './water';

// Source: Tanaka et al., Metrologia 38 (2001) 301, formula values as listed in shared/reference/check-values.md (computed).
describe('water density (Tanaka et al. 2001)', () => {
  it.each([
    [15, 999.1026],
    [20, 998.2067],
    [25, 997.047],
  ])('%s °C → %s kg/m³ (Tanaka 2001, check-values.md)', (t, rho) => {
    expect(Math.abs(waterDensityKgM3(t) - rho)).toBeLessThan(0.00006);
  });

  it('has its maximum near 3.98 °C (Tanaka a1 = −3.983035 °C; physics of water)', () => {
    const at = (t: number) => waterDensityKgM3(t);
    expect(at(3.983)).toBeGreaterThan(at(3.5));
    expect(at(3.983)).toBeGreaterThan(at(4.5));
    expect(Math.abs(at(3.983035) - 999.97495)).toBeLessThan(1e-9);
  });

  it('refuses temperatures outside 0–60 °C and warns above 40 °C', () => {
    expect(() => waterDensityKgM3(-1)).toThrow(RangeError);
    expect(() => waterDensityKgM3(61)).toThrow(/outside 0–60/);
    expect(() => waterDensityKgM3(Number.NaN)).toThrow(RangeError);
    expect(waterDensityWarning(25)).toBeUndefined();
    expect(waterDensityWarning(45)).toMatch(/0–40 °C/);
  });
});
