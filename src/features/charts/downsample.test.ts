import { describe, expect, it } from 'vitest';
import { downsampleLTTB } from './downsample';

describe('downsampleLTTB', () => {
  it('returns short series unchanged', () => {
    const d = [{ x: 0, y: 1 }, { x: 1, y: 2 }];
    expect(downsampleLTTB(d, 10)).toEqual(d);
  });
  it('keeps the first, last and the threshold count, in x order', () => {
    const d = Array.from({ length: 2000 }, (_, i) => ({ x: i, y: Math.sin(i / 50) }));
    const s = downsampleLTTB(d, 300);
    expect(s).toHaveLength(300);
    expect(s[0]).toBe(d[0]);
    expect(s[299]).toBe(d[1999]);
    for (let i = 1; i < s.length; i++) expect(s[i].x).toBeGreaterThan(s[i - 1].x);
  });
  it('keeps a sharp peak that every-n-th sampling would miss', () => {
    // A one-point spike (like a derivative peak at the break) at x = 1001, between every-40th samples.
    const d = Array.from({ length: 2000 }, (_, i) => ({ x: i, y: i === 1001 ? 50 : 1 }));
    const s = downsampleLTTB(d, 50);
    expect(s.some((p) => p.y === 50)).toBe(true);
    const everyNth = d.filter((_, i) => i % 40 === 0);
    expect(everyNth.some((p) => p.y === 50)).toBe(false);
  });
});
