import { describe, expect, it } from 'vitest';
import { canApply, ClockError, clockStatus, elapsedS, formatClock, pauses, sleepGapS, type ClockEvent } from './clock';

const ev = (kind: ClockEvent['kind'], monoMs: number, wallMs = monoMs + 1_700_000_000_000): ClockEvent => ({ kind, monoMs, wallMs });

describe('run clock', () => {
  it('counts from the start anchor while running', () => {
    const e = [ev('start', 1000)];
    expect(clockStatus(e)).toBe('running');
    expect(elapsedS(e, 1000)).toBe(0);
    expect(elapsedS(e, 61_500)).toBeCloseTo(60.5, 9);
  });

  it('excludes a refill pause and freezes while paused', () => {
    const e = [ev('start', 0), ev('pause', 100_000)];
    expect(clockStatus(e)).toBe('paused');
    expect(elapsedS(e, 250_000)).toBeCloseTo(100, 9);
    const resumed = [...e, ev('resume', 160_000)];
    expect(elapsedS(resumed, 170_000)).toBeCloseTo(110, 9);
    expect(pauses(resumed)).toEqual([{ atS: 100, durationS: 60 }]);
  });

  it('freezes at finish', () => {
    const e = [ev('start', 0), ev('finish', 30_000)];
    expect(clockStatus(e)).toBe('finished');
    expect(elapsedS(e, 99_000)).toBe(30);
    expect(canApply(e, 'resume')).toBe(false);
  });

  it('restores the same elapsed time from stored anchors after a reload (new page, same timeline)', () => {
    // Page 1 started at timeline 5_000 ms; page 2 reads the stored events at timeline 65_000 ms.
    const stored = [ev('start', 5_000)];
    expect(elapsedS(stored, 65_000)).toBeCloseTo(60, 9);
  });

  it('refuses impossible sequences', () => {
    expect(() => clockStatus([ev('pause', 0)])).toThrow(ClockError);
    expect(() => clockStatus([ev('start', 10), ev('start', 20)])).toThrow(/cannot follow/);
    expect(() => clockStatus([ev('start', 10), ev('pause', 5)])).toThrow(/back in time/);
  });

  it('notices when the wall clock ran ahead of the monotonic clock (device slept)', () => {
    const e = [ev('start', 0, 1_000_000)];
    expect(sleepGapS(e, 10_000, 1_010_000)).toBeCloseTo(0, 9);
    expect(sleepGapS(e, 10_000, 1_130_000)).toBeCloseTo(120, 9);
  });

  it('formats mm:ss.s without rounding up past the tenth', () => {
    expect(formatClock(0)).toBe('00:00.0');
    expect(formatClock(9.99)).toBe('00:09.9');
    expect(formatClock(65.25)).toBe('01:05.2');
    expect(formatClock(3600)).toBe('60:00.0');
  });
});
