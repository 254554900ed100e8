// What the bench holds of one run: the stored record plus the lists derived from it (effective readings and
// checkpoints in time order, marks still waiting for a value). Loading derives them once; each committed write
// then updates them in place of a full recompute, so a tap on a run of thousands of readings costs the same as on
// a short one. `effective.ts` stays the reference: the tests check these updates against it.
import type { CheckpointRow, MarkRow, ReadingRow, RunEventRow, RunRecord } from '../../local/types';
import { effectiveCheckpoints, effectiveReadings, pendingMarks, type Effective } from './effective';

export interface RunState {
  record: RunRecord;
  readings: readonly Effective<ReadingRow>[];
  checkpoints: readonly Effective<CheckpointRow>[];
  /** Marks with no value yet and not discarded, oldest first. */
  pending: readonly MarkRow[];
}

export function loadState(record: RunRecord): RunState {
  return {
    record,
    readings: effectiveReadings(record.readings),
    checkpoints: effectiveCheckpoints(record.checkpoints),
    pending: pendingMarks(record.marks, record.readings, record.checkpoints, record.events),
  };
}

export function withMark(s: RunState, m: MarkRow): RunState {
  return { ...s, record: { ...s.record, marks: [...s.record.marks, m] }, pending: insertByTime(s.pending, m, (x) => x.timeS) };
}

export function withReading(s: RunState, r: ReadingRow): RunState {
  const rows = [...s.record.readings, r];
  return {
    ...s,
    record: { ...s.record, readings: rows },
    readings: withValue(s.readings, r) ?? effectiveReadings(rows),
    pending: r.replacesId ? s.pending : s.pending.filter((m) => m.id !== r.markId),
  };
}

export function withCheckpoint(s: RunState, c: CheckpointRow): RunState {
  const rows = [...s.record.checkpoints, c];
  return {
    ...s,
    record: { ...s.record, checkpoints: rows },
    checkpoints: withValue(s.checkpoints, c) ?? effectiveCheckpoints(rows),
    pending: c.replacesId ? s.pending : s.pending.filter((m) => m.id !== c.markId),
  };
}

export function withEvents(s: RunState, events: readonly RunEventRow[], run: RunRecord['run'] = s.record.run): RunState {
  const discarded = new Set(events.filter((e) => e.kind === 'discard-mark' && typeof e.data?.markId === 'string').map((e) => e.data!.markId as string));
  return {
    ...s,
    record: { ...s.record, run, events: [...s.record.events, ...events] },
    pending: discarded.size ? s.pending.filter((m) => !discarded.has(m.id)) : s.pending,
  };
}

export function withRun(s: RunState, run: RunRecord['run']): RunState {
  return { ...s, record: { ...s.record, run } };
}

/**
 * One new row of an append-only chain: an original joins the list at its time; a correction replaces the entry
 * whose current row it replaces (or removes it, when the correction deletes). Null when the list cannot place it
 * (a correction of a row not in force, which the screen never offers): the caller then resolves every chain.
 */
function withValue<T extends { id: string; timeS: number; replacesId: string | null; voided: boolean }>(list: readonly Effective<T>[], row: T): readonly Effective<T>[] | null {
  if (!row.replacesId) return row.voided ? null : insertByTime(list, { current: row, history: [row] }, (e) => e.current.timeS);
  const i = list.findIndex((e) => e.current.id === row.replacesId);
  if (i < 0) return null;
  const next = list.slice();
  if (row.voided) next.splice(i, 1);
  else next[i] = { current: row, history: [...list[i].history, row] };
  return next;
}

/** Inserts after every item at or before its time (a stable sort would put it there too); usually an append. */
function insertByTime<T>(list: readonly T[], item: T, time: (x: T) => number): T[] {
  const t = time(item);
  let i = list.length;
  while (i > 0 && time(list[i - 1]) > t) i--;
  const next = list.slice();
  next.splice(i, 0, item);
  return next;
}
