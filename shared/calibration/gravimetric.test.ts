import { describe, expect, it } from 'vitest';
import { CalibrationInputError } from './errors';
import { checkRepeatability, gravimetricDripRate } from './gravimetric';

// Z = 1.002851 mL/g at 20 °C, 1013.25 hPa, 50 % RH (ISO 4787 form, computed; check-values.md).
const Z20 = 1.002851;

describe('gravimetric drip rate', () => {
  it('one delivery at 20 °C: V = m·Z, rate = V/t, u from balance 0.001 g and timing 0.1 s (defaults, common practice)', () => {
    const r = gravimetricDripRate({ massG: 10, durationS: 200, waterTempC: 20 });
    expect(r.n).toBe(1);
    expect(r.volumeMl).toBeCloseTo(10 * Z20, 5);
    expect(r.rateMlPerS).toBeCloseTo((10 * Z20) / 200, 7);
    // GUM first-order, by hand: u_r = √[(Z·0.001/200)² + (0.0501426·0.1/200)²] = √[(5.014e-6)² + (2.507e-5)²] = 2.557e-5
    expect(r.uRateMlPerS).toBeCloseTo(2.557e-5, 8);
    expect(r.sdRateMlPerS).toBeUndefined();
    expect(r.assumptions.join(' ')).toMatch(/common practice/);
    expect(checkRepeatability(r, { maxRelSdPct: 1 }).accepted).toBe(false);
  });

  it('replicates: mean, sample SD and u = √(s²/n + ū²) (GUM, JCGM 100:2008)', () => {
    const reps = [
      { massG: 10.012, durationS: 200.0, waterTempC: 20 },
      { massG: 9.987, durationS: 199.4, waterTempC: 20 },
      { massG: 10.031, durationS: 201.2, waterTempC: 20 },
    ];
    const r = gravimetricDripRate(reps);
    const rates = reps.map((x) => (x.massG * Z20) / x.durationS);
    const m = (rates[0] + rates[1] + rates[2]) / 3;
    const s = Math.sqrt(rates.reduce((a, x) => a + (x - m) ** 2, 0) / 2);
    expect(r.n).toBe(3);
    expect(r.rateMlPerS).toBeCloseTo(m, 7);
    expect(r.sdRateMlPerS!).toBeCloseTo(s, 8);
    expect(r.uRateMlPerS).toBeGreaterThan(s / Math.sqrt(3));
    const uInstr = Math.sqrt(r.uRateMlPerS ** 2 - s ** 2 / 3);
    expect(uInstr).toBeGreaterThan(2.4e-5); // the single-delivery balance/timing u is ≈2.56e-5 (above)
    expect(uInstr).toBeLessThan(2.7e-5);
    expect(r.replicates).toHaveLength(3);
    expect(checkRepeatability(r, { maxRelSdPct: 1 })).toEqual({ accepted: true, reasons: [] });
    const strict = checkRepeatability(r, { maxRelSdPct: 0.05 });
    expect(strict.accepted).toBe(false);
    expect(strict.reasons[0]).toMatch(/exceeds the lab limit 0.05 %/);
  });

  it('warm water gives more volume per gram (Tanaka density falls with temperature)', () => {
    const cold = gravimetricDripRate({ massG: 10, durationS: 100, waterTempC: 15 });
    const warm = gravimetricDripRate({ massG: 10, durationS: 100, waterTempC: 28 });
    expect(warm.volumeMl).toBeGreaterThan(cold.volumeMl);
    expect(gravimetricDripRate({ massG: 10, durationS: 100, waterTempC: 45 }).warnings[0]).toMatch(/0–40 °C/);
  });

  it('rejects bad input with clear messages', () => {
    expect(() => gravimetricDripRate({ massG: -1, durationS: 100, waterTempC: 20 })).toThrow(/massG must be greater than zero/);
    expect(() => gravimetricDripRate({ massG: 1, durationS: 0, waterTempC: 20 })).toThrow(/durationS must be greater than zero/);
    expect(() => gravimetricDripRate({ massG: 1, durationS: 10, waterTempC: 75 })).toThrow(/waterTempC must be at most 60/);
    expect(() => gravimetricDripRate([])).toThrow(CalibrationInputError);
    expect(() => gravimetricDripRate({ massG: 1, durationS: 10, waterTempC: 20, relativeHumidityPct: 120 } as never)).toThrow(
      /relativeHumidityPct/,
    );
  });
});
