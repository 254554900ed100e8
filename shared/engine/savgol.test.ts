import { describe, expect, it } from 'vitest';
import { localPolyValue, savitzkyGolay, sgWeights } from './savgol';

const close = (a: number[], b: number[]) => {
  expect(a.length).toBe(b.length);
  a.forEach((x, i) => expect(x).toBeCloseTo(b[i], 12));
};

describe('Savitzky–Golay coefficients (Anal. Chem. 36 (1964) 1627)', () => {
  it('5-point quadratic smoothing is (−3, 12, 17, 12, −3)/35 (as quoted in a secondary summary of the 1964 tables)', () => {
    close(sgWeights(2, 2, 0), [-3, 12, 17, 12, -3].map((x) => x / 35));
  });
  it('7-point quadratic smoothing is (−2, 3, 6, 7, 6, 3, −2)/21 (1964 tables, from memory)', () => {
    close(sgWeights(3, 2, 0), [-2, 3, 6, 7, 6, 3, -2].map((x) => x / 21));
  });
  it('first derivative: 5-point quadratic (−2..2)/10, 7-point quadratic (−3..3)/28, 5-point cubic (1, −8, 0, 8, −1)/12 (1964 tables, from memory)', () => {
    close(sgWeights(2, 2, 1), [-2, -1, 0, 1, 2].map((x) => x / 10));
    close(sgWeights(3, 2, 1), [-3, -2, -1, 0, 1, 2, 3].map((x) => x / 28));
    close(sgWeights(2, 3, 1), [1, -8, 0, 8, -1].map((x) => x / 12));
    close(sgWeights(3, 3, 1), [22, -67, -58, 0, 58, 67, -22].map((x) => x / 252));
  });
  it('second derivative: 5-point quadratic (2, −1, −2, −1, 2)/7, 7-point (5, 0, −3, −4, −3, 0, 5)/42 (1964 tables, from memory)', () => {
    close(sgWeights(2, 2, 2), [2, -1, -2, -1, 2].map((x) => x / 7));
    close(sgWeights(3, 2, 2), [5, 0, -3, -4, -3, 0, 5].map((x) => x / 42));
  });
});

describe('Savitzky–Golay on uneven spacing (local least squares in the real x positions)', () => {
  it('differentiates a quadratic exactly at unevenly spaced points (a degree-2 fit reproduces any quadratic)', () => {
    const xs = [0, 0.3, 1.1, 1.5, 2.9, 3.0, 4.4, 5.2, 7.0];
    const f = (x: number) => 1.5 - 0.7 * x + 0.25 * x * x;
    const s = savitzkyGolay(xs, xs.map(f), 2, 2);
    xs.forEach((x, i) => {
      expect(s.smooth[i]).toBeCloseTo(f(x), 10);
      expect(s.d1[i]).toBeCloseTo(-0.7 + 0.5 * x, 10);
      expect(s.d2[i]).toBeCloseTo(0.5, 10);
    });
    expect(localPolyValue(xs, xs.map(f), 2.2)).toBeCloseTo(f(2.2), 10);
  });
});
