import { describe, expect, it } from 'vitest';
import { graduations, parseDecimal, positiveError, pressTimer, TIMER_IDLE, timerSeconds, withUncertainty } from './forms';

describe('calibrate form helpers', () => {
  it('parses typed numbers, decimal comma included; rejects junk', () => {
    expect(parseDecimal('4,985')).toBe(4.985);
    expect(parseDecimal(' 0.3888 ')).toBe(0.3888);
    expect(parseDecimal('')).toBeUndefined();
    expect(parseDecimal('4.9.8')).toBeNaN();
    expect(positiveError('-1', 'the mass')).toBe('The mass must be greater than zero.');
    expect(positiveError('abc', 'the mass')).toBe('The mass must be a number.');
    expect(positiveError('2', 'the mass')).toBeNull();
  });

  it('the timer starts on the first press, stops on the second, restarts on the third', () => {
    let t = pressTimer(TIMER_IDLE, 1000);
    expect(timerSeconds(t, 3500)).toBe(2.5);
    t = pressTimer(t, 251_000);
    expect(timerSeconds(t, 999_999)).toBe(250);
    t = pressTimer(t, 300_000);
    expect(t).toEqual({ startedAt: 300_000, stoppedAt: null });
  });

  it('lists the graduations to tap', () => {
    expect(graduations(0, 20, 5)).toEqual([0, 5, 10, 15, 20]);
    expect(graduations(0.5, 1.1, 0.2)).toEqual([0.5, 0.7, 0.9, 1.1]);
    expect(graduations(10, 5, 1)).toEqual([]);
  });

  it('rounds a value to its uncertainty (GUM 7.2.6: u to two significant digits)', () => {
    expect(withUncertainty(0.102141, 0.000101, 'mol/L')).toBe('0.10214 ± 0.00010 mol/L');
    expect(withUncertainty(null, 0.1, 'mL')).toBe('—');
  });
});
