// The incremental updates of runState.ts must give what a full resolve (effective.ts) gives for the same rows:
// checked over random sequences of what the bench can do (marks, values, corrections, deletions, discards),
// including taps whose values are typed out of order and marks at the same instant.
import { describe, expect, it } from 'vitest';
import type { CheckpointRow, MarkRow, ReadingRow, RunEventRow, RunRecord } from '../../local/types';
import { effectiveCheckpoints, effectiveReadings, pendingMarks } from './effective';
import { loadState, withCheckpoint, withEvents, withMark, withReading, type RunState } from './runState';

function rng(seed: number) {
  let s = seed >>> 0;
  return () => ((s = (s * 1664525 + 1013904223) >>> 0) / 2 ** 32);
}

const emptyRecord = (): RunRecord => ({
  run: { id: 'run', deviceId: 'd', analystId: 'a', labId: null, label: 'demo', setup: {}, status: 'running', notes: '', createdWallMs: 0, updatedWallMs: 0, localVersion: 1, serverVersion: null },
  events: [],
  marks: [],
  readings: [],
  checkpoints: [],
});

function expectMatchesFullResolve(s: RunState) {
  const r = s.record;
  expect(s.readings).toEqual(effectiveReadings(r.readings));
  expect(s.checkpoints).toEqual(effectiveCheckpoints(r.checkpoints));
  expect(s.pending).toEqual(pendingMarks(r.marks, r.readings, r.checkpoints, r.events));
  expect(loadState(r)).toEqual(s);
}

describe('run state updates', () => {
  for (const seed of [1, 2, 3, 4, 5, 6, 7, 8]) {
    it(`equal a full resolve after every step (random sequence ${seed})`, () => {
      const rand = rng(seed);
      let n = 0;
      let t = 0;
      let s = loadState(emptyRecord());
      for (let step = 0; step < 160; step++) {
        const roll = rand();
        if (roll < 0.35 || !s.pending.length) {
          // A tap; now and then two at the same displayed instant.
          if (rand() > 0.1) t += Math.round(rand() * 30) / 10;
          const m: MarkRow = { id: `m${++n}`, runId: 'run', kind: rand() < 0.8 ? 'reading' : 'checkpoint', timeS: t, monoMs: t * 1000, wallMs: n };
          s = withMark(s, m);
        } else if (roll < 0.7) {
          // A value for any waiting mark (not necessarily the oldest).
          const m = s.pending[Math.floor(rand() * s.pending.length)];
          if (m.kind === 'reading') {
            s = withReading(s, { id: `r${++n}`, runId: 'run', markId: m.id, timeS: m.timeS, pH: 3 + rand() * 8, mV: null, pHSource: 'typed', replacesId: null, reason: null, voided: false, wallMs: n });
          } else {
            s = withCheckpoint(s, { id: `c${++n}`, runId: 'run', markId: m.id, timeS: m.timeS, buretteMl: rand() * 50, replacesId: null, reason: null, voided: false, wallMs: n });
          }
        } else if (roll < 0.8) {
          const m = s.pending[Math.floor(rand() * s.pending.length)];
          const ev: RunEventRow = { id: `e${++n}`, runId: 'run', kind: 'discard-mark', monoMs: 0, wallMs: n, data: { markId: m.id, reason: 'tapped by mistake' } };
          s = withEvents(s, [ev]);
        } else if (roll < 0.92 && s.readings.length) {
          // Correct or delete a reading in force (what the table offers).
          const e = s.readings[Math.floor(rand() * s.readings.length)].current;
          const del = rand() < 0.3;
          const fix: ReadingRow = { ...e, id: `r${++n}`, pH: del ? null : 3 + rand() * 8, pHSource: del ? 'void' : 'typed', replacesId: e.id, reason: 'checked', voided: del, wallMs: n };
          s = withReading(s, fix);
        } else if (s.checkpoints.length) {
          const e = s.checkpoints[Math.floor(rand() * s.checkpoints.length)].current;
          const del = rand() < 0.3;
          const fix: CheckpointRow = { ...e, id: `c${++n}`, buretteMl: del ? null : rand() * 50, replacesId: e.id, reason: 'checked', voided: del, wallMs: n };
          s = withCheckpoint(s, fix);
        }
        expectMatchesFullResolve(s);
      }
      expect(s.record.readings.length).toBeGreaterThan(20);
    });
  }

  it('leaves the lists it does not touch as they were (so the screen can skip them)', () => {
    let s = loadState(emptyRecord());
    s = withMark(s, { id: 'm1', runId: 'run', kind: 'reading', timeS: 1, monoMs: 1000, wallMs: 1 });
    s = withReading(s, { id: 'r1', runId: 'run', markId: 'm1', timeS: 1, pH: 4, mV: null, pHSource: 'typed', replacesId: null, reason: null, voided: false, wallMs: 2 });
    const before = s;
    s = withMark(s, { id: 'm2', runId: 'run', kind: 'reading', timeS: 2, monoMs: 2000, wallMs: 3 });
    expect(s.readings).toBe(before.readings);
    expect(s.checkpoints).toBe(before.checkpoints);
    expect(s.record.readings).toBe(before.record.readings);
    expect(s.record.events).toBe(before.record.events);
    expect(s.pending.map((m) => m.id)).toEqual(['m2']);
  });

  it('a correction of a row no longer in force falls back to the full resolve', () => {
    let s = loadState(emptyRecord());
    s = withMark(s, { id: 'm1', runId: 'run', kind: 'reading', timeS: 1, monoMs: 1000, wallMs: 1 });
    const a: ReadingRow = { id: 'r1', runId: 'run', markId: 'm1', timeS: 1, pH: 4, mV: null, pHSource: 'typed', replacesId: null, reason: null, voided: false, wallMs: 2 };
    s = withReading(s, a);
    const del: ReadingRow = { ...a, id: 'r2', pH: null, pHSource: 'void', replacesId: 'r1', reason: 'bubble', voided: true, wallMs: 3 };
    s = withReading(s, del);
    expect(s.readings).toEqual([]);
    // Not offered by the screen, but the stored chain says the reading is back: the lists agree with the record.
    s = withReading(s, { ...a, id: 'r3', pH: 4.2, replacesId: 'r2', reason: 'it was fine', wallMs: 4 });
    expectMatchesFullResolve(s);
    expect(s.readings.map((e) => e.current.id)).toEqual(['r3']);
  });
});
