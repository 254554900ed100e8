import { describe, expect, it } from 'vitest';
import type { CheckpointRow, ReadingRow, RunEventRow } from '../../local/types';
import { buildRunDocument } from './document';
import { effectiveCheckpoints, effectiveReadings, pendingMarks } from './effective';
import type { RunSetup } from './setup';

const setup: RunSetup = {
  label: 'demo',
  sample: { volumeMl: 25 },
  titrant: { source: 'manual', concentrationM: 0.1 },
  delivery: { source: 'manual', rateMlPerS: 0.05, startBuretteMl: 0.5 },
};
let n = 0;
const reading = (p: Partial<ReadingRow>): ReadingRow => ({ id: `r${++n}`, runId: 'run', markId: `m${n}`, timeS: 0, pH: 4, mV: null, pHSource: 'typed', replacesId: null, reason: null, voided: false, wallMs: n, ...p });
const checkpoint = (p: Partial<CheckpointRow>): CheckpointRow => ({ id: `c${++n}`, runId: 'run', markId: `cm${n}`, timeS: 0, buretteMl: 1, replacesId: null, reason: null, voided: false, wallMs: n, ...p });

describe('effective readings', () => {
  it('follows a correction chain to its end and keeps the history', () => {
    const a = reading({ timeS: 10, pH: 4.1 });
    const fix = reading({ markId: a.markId, timeS: 10, pH: 4.01, replacesId: a.id, reason: 'typo' });
    const fix2 = reading({ markId: a.markId, timeS: 10, pH: 4.02, replacesId: fix.id, reason: 'meter settled' });
    const eff = effectiveReadings([a, fix, fix2]);
    expect(eff).toHaveLength(1);
    expect(eff[0].current.pH).toBe(4.02);
    expect(eff[0].history.map((h) => h.id)).toEqual([a.id, fix.id, fix2.id]);
  });
  it('drops a deleted reading but not its neighbours', () => {
    const a = reading({ timeS: 5 });
    const b = reading({ timeS: 6 });
    const del = reading({ markId: a.markId, timeS: 5, pH: null, pHSource: 'void', voided: true, replacesId: a.id, reason: 'bubble on electrode' });
    expect(effectiveReadings([a, b, del]).map((e) => e.current.id)).toEqual([b.id]);
  });
  it('lists marks still waiting for a value, minus discarded ones', () => {
    const marks = [1, 2, 3].map((i) => ({ id: `mk${i}`, runId: 'run', kind: 'reading' as const, timeS: i, monoMs: i, wallMs: i }));
    const done = reading({ markId: 'mk1', timeS: 1 });
    const discard: RunEventRow = { id: 'e', runId: 'run', kind: 'discard-mark', monoMs: 0, wallMs: 0, data: { markId: 'mk3' } };
    expect(pendingMarks(marks, [done], [], [discard]).map((m) => m.id)).toEqual(['mk2']);
  });
});

describe('buildRunDocument', () => {
  it('keeps the mark time, leaves out mV-only readings, starts checkpoints at the start reading', () => {
    const rs = [reading({ timeS: 2, pH: 3 }), reading({ timeS: 4, pH: null, mV: 120, pHSource: 'mv-only' }), reading({ timeS: 6, pH: 3.2 })];
    const cs = [checkpoint({ timeS: 100, buretteMl: 5.6 })];
    const { doc, notes } = buildRunDocument(setup, effectiveReadings(rs), effectiveCheckpoints(cs));
    expect(doc!.readings).toEqual([{ timeS: 2, pH: 3 }, { timeS: 6, pH: 3.2 }]);
    expect(doc!.delivery.checkpoints).toEqual([{ timeS: 0, buretteMl: 0.5 }, { timeS: 100, buretteMl: 5.6 }]);
    expect(notes[0]).toMatch(/1 reading in mV/);
  });
  it('puts burette readings after a refill on one cumulative scale', () => {
    // Drip stopped at 400 s with the burette at 45.00 mL, refilled to 0.20 mL; at 500 s it reads 5.20 mL,
    // so 45.00 + 5.00 = 50.00 mL on the cumulative scale.
    const cs = [checkpoint({ timeS: 500, buretteMl: 5.2 })];
    const { doc } = buildRunDocument(setup, effectiveReadings([reading({ timeS: 1 })]), effectiveCheckpoints(cs), [{ atS: 400, beforeMl: 45, afterMl: 0.2 }]);
    expect(doc!.delivery.checkpoints).toEqual([
      { timeS: 0, buretteMl: 0.5 },
      { timeS: 400, buretteMl: 45 },
      { timeS: 500, buretteMl: expect.closeTo(50, 9) },
    ]);
  });
  it('returns no document before the first pH', () => {
    expect(buildRunDocument(setup, [], []).doc).toBeNull();
  });
});
