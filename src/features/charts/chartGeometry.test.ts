import { describe, expect, it } from 'vitest';
import {
  clampDomain,
  ensureVisible,
  isWhole,
  minSpan,
  nearestByX,
  nearestStop,
  orderByX,
  panBy,
  readoutNumber,
  selectionDomain,
  stepStop,
  visiblePoints,
  xStops,
  yExtentIn,
  zoomAt,
  type Domain,
} from './chartGeometry';

// Expected values are worked by hand from the definitions (common practice); the brute-force nearest search is the
// reference for the bisection.
const pts = (xs: number[]) => xs.map((x, i) => ({ x, y: i }));
const FULL: Domain = [0, 20];
const close = (d: Domain, e: [number, number]) => {
  expect(d[0]).toBeCloseTo(e[0], 9);
  expect(d[1]).toBeCloseTo(e[1], 9);
};

describe('nearest point', () => {
  it('matches a brute-force search on unordered data with gaps, duplicates and non-finite points', () => {
    const p = [...pts([5, 1, 9, 9, 3, 14.5, 0.2, 7]), { x: NaN, y: 1 }, { x: 4, y: Infinity }];
    const order = orderByX(p);
    expect(order).not.toContain(8);
    expect(order).not.toContain(9);
    for (let x = -2; x <= 17; x += 0.05) {
      const got = nearestByX(p, order, x);
      let best = -1;
      for (const i of order) if (best < 0 || Math.abs(p[i].x - x) < Math.abs(p[best].x - x) || (Math.abs(p[i].x - x) === Math.abs(p[best].x - x) && p[i].x < p[best].x)) best = i;
      expect(Math.abs(p[got].x - x), `x=${x}`).toBe(Math.abs(p[best].x - x));
    }
  });

  it('a tie goes to the smaller x; nothing to find gives -1', () => {
    const p = pts([2, 4]);
    expect(nearestByX(p, orderByX(p), 3)).toBe(0);
    expect(nearestByX([], [], 3)).toBe(-1);
    expect(nearestByX(p, orderByX(p), NaN)).toBe(-1);
  });

  it('keyboard stops: distinct x of all series in order; nearest stop; steps held inside', () => {
    const stops = xStops([pts([3, 1, 2]), pts([2, 10]), [{ x: NaN, y: 0 }]]);
    expect(stops).toEqual([1, 2, 3, 10]);
    expect(nearestStop(stops, 6.4)).toBe(2);
    expect(nearestStop(stops, 6.6)).toBe(3);
    expect(stepStop(4, -1, 1)).toBe(0);
    expect(stepStop(4, -1, -1)).toBe(3);
    expect(stepStop(4, 2, 10)).toBe(3);
    expect(stepStop(4, 2, -10)).toBe(0);
    expect(stepStop(0, 0, 1)).toBe(-1);
  });
});

describe('zoom and pan', () => {
  it('zooming in around an anchor keeps the anchor where it was on screen', () => {
    const d = zoomAt(FULL, FULL, 0.5, 5); // anchor at a quarter of the view
    close(d, [2.5, 12.5]);
    expect((5 - d[0]) / (d[1] - d[0])).toBeCloseTo(0.25, 12);
    close(zoomAt(FULL, FULL, 0.5), [5, 15]);
  });

  it('zooming out stops at the whole range and never leaves it', () => {
    close(zoomAt([15, 20], FULL, 4, 19), [0, 20]);
    close(zoomAt([16, 18], FULL, 2, 18), [14, 18]);
    const d = zoomAt([17, 19], FULL, 3, 19);
    expect(d[1]).toBeLessThanOrEqual(20);
    expect(d[1] - d[0]).toBeCloseTo(6, 12);
  });

  it('zooming in stops at a thousandth of the range', () => {
    let d: Domain = FULL;
    for (let i = 0; i < 40; i++) d = zoomAt(d, FULL, 0.5, 7);
    expect(d[1] - d[0]).toBeCloseTo(minSpan(FULL), 12);
    expect(d[0]).toBeLessThanOrEqual(7);
    expect(d[1]).toBeGreaterThanOrEqual(7);
  });

  it('panning moves by a fraction of the view and stops at the ends', () => {
    close(panBy([4, 8], FULL, 0.5), [6, 10]);
    close(panBy([4, 8], FULL, -2), [0, 4]);
    close(panBy([14, 18], FULL, 1), [16, 20]);
  });

  it('a point stepped outside the view brings the view along; inside, the view stays', () => {
    const d: Domain = [4, 8];
    expect(ensureVisible(d, FULL, 6)).toBe(d);
    const r = ensureVisible(d, FULL, 9);
    expect(r[1] - r[0]).toBeCloseTo(4, 12);
    expect(9).toBeLessThanOrEqual(r[1] - 0.4 + 1e-12);
    close(ensureVisible(d, FULL, 19.9), [16, 20]);
    close(ensureVisible(d, FULL, 0), [0, 4]);
  });

  it('clamping keeps the width, moves the view inside, and widens a too narrow one', () => {
    close(clampDomain([18, 24], FULL), [14, 20]);
    close(clampDomain([-3, 1], FULL), [0, 4]);
    expect(clampDomain([5, 5], FULL)[1] - clampDomain([5, 5], FULL)[0]).toBeCloseTo(minSpan(FULL), 12);
    close(clampDomain([-5, 40], FULL), [0, 20]);
    expect(isWhole([0, 20], FULL)).toBe(true);
    expect(isWhole([0, 19.9], FULL)).toBe(false);
  });

  it('a drag selects the x range under it, either direction; a short drag is a click', () => {
    const invert = (px: number) => (px - 40) / 10; // 40 px margin, 10 px per unit
    close(selectionDomain(140, 90, invert, FULL)!, [5, 10]);
    close(selectionDomain(0, 90, invert, FULL)!, [0, 5]);
    expect(selectionDomain(100, 105, invert, FULL)).toBeNull();
  });
});

describe('what is drawn when zoomed', () => {
  it('keeps the points in view and one neighbour each side, in the series order', () => {
    const p = pts([0, 1, 2, 3, 4, 5, 6]);
    expect(visiblePoints(p, [2.5, 4.2]).map((q) => q.x)).toEqual([2, 3, 4, 5]);
    expect(visiblePoints(p, [10, 12])).toEqual([]);
  });

  it('y range of the points in view, padded by 5 %; a flat run gets a small band', () => {
    const a = [{ x: 1, y: 3 }, { x: 2, y: 5 }, { x: 9, y: 100 }];
    const e = yExtentIn([a, [{ x: 1.5, y: 4 }]], [0, 3])!;
    expect(e[0]).toBeCloseTo(2.9, 12);
    expect(e[1]).toBeCloseTo(5.1, 12);
    const flat = yExtentIn([[{ x: 1, y: 7 }]], [0, 3])!;
    expect(flat[0]).toBeLessThan(7);
    expect(flat[1]).toBeGreaterThan(7);
    expect(yExtentIn([a], [20, 30])).toBeNull();
  });
});

describe('readoutNumber', () => {
  it('four significant figures, plain for everyday magnitudes, powers of ten for tiny and huge ones', () => {
    expect(readoutNumber(4.75612)).toBe('4.756');
    expect(readoutNumber(12.4)).toBe('12.4');
    expect(readoutNumber(-0.0123456)).toBe('-0.01235');
    expect(readoutNumber(0.00002345)).toBe('2.345×10^-5');
    expect(readoutNumber(0)).toBe('0');
    expect(readoutNumber(NaN)).toBe('—');
  });
});
