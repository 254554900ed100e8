import { describe, expect, it } from 'vitest';
import { acceptElectrode, calibrateElectrode, iupacBufferPH, mvToPH, nernstSlopeMvPerPH } from './electrode';

describe('Nernst slope RT ln10 / F (CODATA 2018 constants; values computed in check-values.md)', () => {
  it.each([
    [20, 58.167],
    [25, 59.159],
    [30, 60.152],
  ])('%s °C → %s mV/pH', (t, s) => {
    // RT ln10/F at 30 °C is 60.15146 (python3 math, same constants), so the listed 60.152 is off by 0.0005 in
    // rounding; the check allows one unit of its last digit.
    expect(Math.abs(nernstSlopeMvPerPH(t) - s)).toBeLessThan(0.001);
  });
  it('is proportional to absolute temperature', () => {
    expect(nernstSlopeMvPerPH(50) / nernstSlopeMvPerPH(0)).toBeCloseTo(323.15 / 273.15, 12);
  });
});

describe('IUPAC primary pH standards (Buck et al., Pure Appl. Chem. 74 (2002) 2169; values memory)', () => {
  it.each([
    ['KHP', 20, 4.0],
    ['KHP', 25, 4.005],
    ['KHP', 30, 4.011],
    ['phosphate', 20, 6.881],
    ['phosphate', 25, 6.865],
    ['phosphate', 30, 6.853],
    ['borax', 20, 9.225],
    ['borax', 25, 9.18],
    ['borax', 30, 9.139],
  ] as const)('%s at %s °C → %s', (b, t, pH) => {
    // KHP from the Hamer, Pinching & Acree (1946) formula, which agrees with Buck et al. within 0.0015.
    expect(Math.abs(iupacBufferPH(b, t) - pH)).toBeLessThanOrEqual(b === 'KHP' ? 0.0015 : 1e-9);
  });
  it('interpolates within the table and refuses outside it', () => {
    const p = iupacBufferPH('phosphate', 22.5);
    expect(p).toBeLessThan(6.881);
    expect(p).toBeGreaterThan(6.865);
    expect(() => iupacBufferPH('borax', 35)).toThrow(/20–30 °C/);
    expect(() => iupacBufferPH('phosphate', 15)).toThrow(RangeError);
    expect(iupacBufferPH('KHP', 50)).toBeCloseTo(4.0 + 0.0000479 * 35 ** 2, 10); // Hamer et al. 1946, 0–60 °C
    expect(() => iupacBufferPH('KHP', 61)).toThrow(RangeError);
  });
});

describe('electrode calibration', () => {
  it('two buffers at 25 °C: slope and offset by hand from the definitions', () => {
    // KHP 4.005 → +171.0 mV, phosphate 6.865 → +5.0 mV: S = −166.0/2.860 = −58.042 mV/pH = 98.11 % of 59.159;
    // E(pH 7) = 5.0 − 58.042·0.135 = −2.84 mV.
    const c = calibrateElectrode({ temperatureC: 25, points: [{ buffer: 'KHP', mV: 171 }, { buffer: 'phosphate', mV: 5 }] });
    expect(c.slopeMvPerPH).toBeCloseTo(-58.042, 2);
    expect(c.slopePct).toBeCloseTo(98.11, 1);
    expect(c.offsetMv).toBeCloseTo(-2.84, 1);
    expect(c.r2).toBeUndefined();
    expect(c.accepted).toBe(true);
    expect(c.residualsMv.every((r) => Math.abs(r) < 1e-9)).toBe(true);
  });

  it('three points: least-squares line, r², residuals; recovers a synthetic electrode (self-consistency)', () => {
    const S = 0.97 * nernstSlopeMvPerPH(20);
    const E7 = 12;
    const pts = [4.0, 6.881, 9.225].map((pH, i) => ({ pH, mV: E7 - S * (pH - 7) + [0.4, -0.8, 0.4][i] }));
    const c = calibrateElectrode({ temperatureC: 20, points: pts });
    expect(c.slopePct).toBeGreaterThan(96.5);
    expect(c.slopePct).toBeLessThan(97.5);
    expect(Math.abs(c.offsetMv - E7)).toBeLessThan(1);
    expect(c.r2!).toBeGreaterThan(0.9999);
    expect(c.r2!).toBeLessThan(1);
    expect(c.residualsMv.reduce((a, b) => a + b, 0)).toBeCloseTo(0, 9); // OLS residuals sum to zero
  });

  it('acceptance: lab limits (defaults 95–105 %, ±30 mV: common practice)', () => {
    expect(acceptElectrode({ slopePct: 93, offsetMv: 0 }).reasons[0]).toMatch(/outside 95–105 %/);
    expect(acceptElectrode({ slopePct: 93, offsetMv: 0 }, { minSlopePct: 90 }).accepted).toBe(true);
    expect(acceptElectrode({ slopePct: 100, offsetMv: 35 }).reasons[0]).toMatch(/±30 mV/);
    expect(acceptElectrode({ slopePct: -100, offsetMv: 0 }).reasons[0]).toMatch(/wrong sign/);
    const c = calibrateElectrode({
      temperatureC: 25,
      points: [{ pH: 4, mV: 120 }, { pH: 7, mV: 45 }],
    });
    expect(c.accepted).toBe(false);
    expect(c.reasons.length).toBe(2);
  });

  it('mV → pH inverts the calibration, with Nernstian temperature scaling', () => {
    const c = calibrateElectrode({ temperatureC: 25, points: [{ buffer: 'KHP', mV: 171 }, { buffer: 'borax', mV: -128 }] });
    expect(mvToPH(c, 171)).toBeCloseTo(4.005, 3);
    expect(mvToPH(c, -128)).toBeCloseTo(9.18, 3);
    expect(mvToPH(c, c.offsetMv)).toBeCloseTo(7, 12);
    // At 35 °C the slope is larger by 308.15/298.15, so the same mV is closer to pH 7.
    expect(Math.abs(mvToPH(c, 171, 35) - 7)).toBeLessThan(Math.abs(mvToPH(c, 171) - 7));
  });

  it('rejects bad input with clear messages', () => {
    expect(() => calibrateElectrode({ temperatureC: 25, points: [{ pH: 4, mV: 170 }] })).toThrow(/at least 2 buffer points/);
    expect(() => calibrateElectrode({ temperatureC: 25, points: [{ pH: 7, mV: 1 }, { pH: 7, mV: 2 }] })).toThrow(/same pH/);
    expect(() =>
      calibrateElectrode({ temperatureC: 35, points: [{ buffer: 'KHP', mV: 170 }, { buffer: 'borax', mV: -130 }] }),
    ).toThrow(/points.1.buffer: no borax buffer value at 35 °C/);
    expect(() => calibrateElectrode({ temperatureC: 25, points: [{ pH: 4, buffer: 'KHP', mV: 1 }, { pH: 7, mV: 2 }] } as never)).toThrow(
      /either pH or buffer/,
    );
    expect(() => calibrateElectrode({ temperatureC: 80, points: [{ pH: 4, mV: 1 }, { pH: 7, mV: 2 }] })).toThrow(/at most 60/);
  });
});
