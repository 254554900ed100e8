import { describe, expect, it } from 'vitest';
import { airDensityKgM3, massToVolume20Ml, resolveAirConditions, zFactorMlPerG } from './air';

describe('air density (OIML R 111 / EURAMET cg-19 approximation, memory)', () => {
  it('gives ≈1.199 kg/m³ at 1013.25 hPa, 20 °C, 50 % RH (formula in check-values.md, computed by hand)', () => {
    // (0.34848·1013.25 − 0.009·50·e^(1.22)) / 293.15 = 1.19929
    expect(airDensityKgM3({ airPressureHPa: 1013.25, airTempC: 20, relativeHumidityPct: 50 })).toBeCloseTo(1.19929, 5);
  });
  it('falls with humidity and temperature, rises with pressure (ideal-gas physics)', () => {
    const base = airDensityKgM3();
    expect(airDensityKgM3({ relativeHumidityPct: 90 })).toBeLessThan(base);
    expect(airDensityKgM3({ airTempC: 30 })).toBeLessThan(base);
    expect(airDensityKgM3({ airPressureHPa: 1030 })).toBeGreaterThan(base);
  });
  it('says which conditions were defaulted', () => {
    const r = resolveAirConditions({ airPressureHPa: 990 });
    expect(r.air).toEqual({ airPressureHPa: 990, relativeHumidityPct: 50, airTempC: 20 });
    expect(r.defaulted).toHaveLength(2);
    expect(r.defaulted.join(' ')).toMatch(/common practice/);
  });
});

describe('ISO 4787-form Z factor and V20', () => {
  it('Z at 20 °C, 1013.25 hPa, 50 % RH = 1.002851 mL/g (computed, check-values.md)', () => {
    expect(zFactorMlPerG(20)).toBeCloseTo(1.002851, 6);
  });
  it('Z at 20 °C agrees with the ISO 4787 table value 1.0029 mL/g to its 4 decimals (ISO table, memory)', () => {
    expect(Math.abs(zFactorMlPerG(20) - 1.0029)).toBeLessThanOrEqual(0.00005);
  });
  it('V20 = m·Z at 20 °C, and the glass expansion term enters away from 20 °C', () => {
    expect(massToVolume20Ml(10, 20)).toBeCloseTo(10 * zFactorMlPerG(20), 12);
    const z25 = zFactorMlPerG(25);
    expect(massToVolume20Ml(10, 25)).toBeCloseTo(10 * z25 * (1 - 9.9e-6 * 5), 12);
  });
});
