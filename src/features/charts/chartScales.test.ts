import { describe, expect, it } from 'vitest';
import { makeScales, PAD, tickLabels } from './chartScales';

// Expected labels and margins worked by hand from the rules in chartScales.ts (common practice for axis labels).
describe('tick labels', () => {
  it('everyday numbers as written', () => {
    expect(tickLabels([0, 2, 4, 14]).map((t) => t.label)).toEqual(['0', '2', '4', '14']);
    expect(tickLabels([-0.1, 0, 0.25]).map((t) => t.label)).toEqual(['-0.1', '0', '0.25']);
  });

  it('tiny and huge ones in powers of ten, zero as 0', () => {
    expect(tickLabels([0, 0.0002, 0.0004, 0.001]).map((t) => t.label)).toEqual(['0', '2e-4', '4e-4', '1e-3']);
    expect(tickLabels([0, 200000, 400000]).map((t) => t.label)).toEqual(['0', '2e5', '4e5']);
  });
});

describe('makeScales margins', () => {
  const s = (y: number[]) => [{ id: 'a', label: 'a', color: '#000', points: y.map((v, i) => ({ x: i, y: v })) }];

  it('keeps the usual left margin for pH and widens it for long tick labels', () => {
    const pH = makeScales({ width: 400, height: 260, series: s([3, 12]), markers: [] })!;
    expect(pH.padL).toBe(PAD.left);
    const gran = makeScales({ width: 400, height: 260, series: s([0.00001, 0.00123]), markers: [] })!;
    expect(gran.padL).toBeGreaterThan(PAD.left);
    expect(gran.x.range()[0]).toBe(gran.padL);
    const widest = Math.max(...gran.yTicksL.map((t) => t.label.length));
    // Room for the rotated title (22 px), the labels (7.2 px a character) and a 6 px gap.
    expect(gran.padL).toBe(Math.max(PAD.left, Math.ceil(22 + widest * 7.2 + 6)));
  });

  it('no right axis without a series on it, even when a right domain is given', () => {
    const sc = makeScales({ width: 400, height: 260, series: s([1, 2]), markers: [], yRightDomain: [0, 1] })!;
    expect(sc.yR).toBeNull();
    expect(sc.yTicksR).toEqual([]);
  });
});
