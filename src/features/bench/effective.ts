// From append-only local rows to what the run currently says: follow each correction chain to its end, drop
// deletions, and find marks still waiting for a value.
import type { CheckpointRow, MarkRow, ReadingRow, RunEventRow } from '../../local/types';

export interface Effective<T> {
  /** The row in force (end of the chain). */
  current: T;
  /** Every row of the chain, original first. */
  history: T[];
}

function resolveChains<T extends { id: string; replacesId: string | null; voided: boolean }>(rows: readonly T[]): Effective<T>[] {
  const byReplaced = new Map<string, T>();
  for (const r of rows) if (r.replacesId) byReplaced.set(r.replacesId, r);
  const out: Effective<T>[] = [];
  for (const r of rows) {
    if (r.replacesId) continue;
    const history = [r];
    let cur = r;
    const seen = new Set([r.id]);
    for (let next = byReplaced.get(cur.id); next && !seen.has(next.id); next = byReplaced.get(cur.id)) {
      seen.add(next.id);
      history.push(next);
      cur = next;
    }
    if (!cur.voided) out.push({ current: cur, history });
  }
  return out;
}

export function effectiveReadings(rows: readonly ReadingRow[]): Effective<ReadingRow>[] {
  return resolveChains(rows).sort((a, b) => a.current.timeS - b.current.timeS);
}

export function effectiveCheckpoints(rows: readonly CheckpointRow[]): Effective<CheckpointRow>[] {
  return resolveChains(rows).sort((a, b) => a.current.timeS - b.current.timeS);
}

/** Marks with no value yet and not discarded, oldest first. */
export function pendingMarks(marks: readonly MarkRow[], readings: readonly ReadingRow[], checkpoints: readonly CheckpointRow[], events: readonly RunEventRow[]): MarkRow[] {
  const done = new Set<string>();
  for (const r of readings) done.add(r.markId);
  for (const c of checkpoints) done.add(c.markId);
  for (const e of events) if (e.kind === 'discard-mark' && typeof e.data?.markId === 'string') done.add(e.data.markId);
  return marks.filter((m) => !done.has(m.id)).sort((a, b) => a.timeS - b.timeS);
}
