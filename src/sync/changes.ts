// Turns rows of the local outbox (src/local) into changes of the sync protocol (shared/schemas/sync.ts).
// One outbox row may become up to four changes (a metadata edit of several fields, a submission with its event);
// their sequence numbers are outboxSeq × 4 + slot, so they increase with the outbox and stay the same on every replay.
import { v5 } from 'uuid';
import { changeSchema, isQuickChange, type Change, type MetaField } from '../../shared/schemas/sync';
import type { CheckpointRow, OutboxRow, ReadingRow, RunEventRow, RunRow } from '../local/types';

export const SLOTS = 4;
/** Namespace of the ids made for edits (which have no row of their own on the device). Fixed, random. */
const EDIT_NAMESPACE = '5b0f7b6e-3c2a-4d61-9a57-6f2f0e0c8a11';

export const editId = (deviceId: string, outboxSeq: number, what: string) => v5(`${deviceId}/${outboxSeq}/${what}`, EDIT_NAMESPACE);

export type Mapped =
  | { kind: 'send'; changes: Change[] }
  /** Nothing to send (a mark: its time travels with its reading); acknowledged locally. */
  | { kind: 'local-only' }
  /** Not sendable yet (a run with no lab, before sign-in): the queue waits here. */
  | { kind: 'wait'; reason: string }
  /** Can never be sent as it is: rejected on the device with the reason. */
  | { kind: 'invalid'; reason: string };

export interface MapContext {
  deviceId: string;
  /** The run's lab now (it may have been set after the run was created, at sign-in). */
  runLab(runId: string): Promise<string | null>;
}

/** Only the insert of a run needs a lookup (its lab, which may be set after the run was made); the rest map at once. */
export const needsLab = (row: OutboxRow): boolean => row.entity === 'run' && row.op === 'insert';

export async function toChanges(row: OutboxRow, ctx: MapContext): Promise<Mapped> {
  if (!needsLab(row)) return changesOf(row, ctx.deviceId, null);
  const labId = await ctx.runLab((row.payload as RunRow).id);
  if (!labId) return { kind: 'wait', reason: 'This run belongs to no lab yet: sign in to send it.' };
  return changesOf(row, ctx.deviceId, labId);
}

// Module-level, not a closure per row: a long offline run maps tens of thousands of rows in one sync.
function change(row: OutboxRow, slot: number, kind: Change['kind'], id: string, payload: unknown): Change {
  return { id, kind, seq: row.seq * SLOTS + slot, recordedAt: Math.max(0, Math.round(row.createdWallMs)), payload };
}

// One answer for every mark (half the rows of a long offline run), not an object each.
const LOCAL_ONLY: Mapped = Object.freeze({ kind: 'local-only' });

/** The mapping itself, synchronous; `labId` is the run's lab for a run insert (see needsLab), unused otherwise. */
export function changesOf(row: OutboxRow, deviceId: string, labId: string | null): Mapped {
  let changes: Change[];
  switch (row.entity) {
    case 'mark':
      return LOCAL_ONLY;
    case 'run': {
      if (row.op === 'insert') {
        const r = row.payload as RunRow;
        if (!labId) return { kind: 'wait', reason: 'This run belongs to no lab yet: sign in to send it.' };
        const setup = r.setup && typeof r.setup === 'object' && !Array.isArray(r.setup) ? r.setup : { value: r.setup ?? null };
        changes = [change(row, 0, 'run', r.id, { labId, sampleName: r.label, setup, notes: r.notes ?? '', status: r.status })];
      } else {
        const p = row.payload as { id: string; label?: string; notes?: string; status?: string; baseServerVersion?: number | null };
        const base = p.baseServerVersion ?? null;
        const fields: [MetaField, string | undefined][] = [
          ['notes', p.notes],
          ['sampleName', p.label],
          ['status', p.status],
        ];
        changes = fields
          .map(([field, value], i) => (value === undefined ? null : change(row, i, 'run_meta_edit', editId(deviceId, row.seq, field), { runId: p.id, field, value, baseVersion: base })))
          .filter((c): c is Change => c !== null);
      }
      break;
    }
    case 'run_event': {
      const e = row.payload as RunEventRow;
      const atS = typeof e.data?.atS === 'number' && e.data.atS >= 0 ? e.data.atS : 0;
      changes = [change(row, 0, 'run_event', e.id, { runId: e.runId, kind: e.kind, timeS: atS, detail: { ...(e.data ?? {}), monoMs: e.monoMs } })];
      if (e.kind === 'submit') changes.push(change(row, 1, 'submission', editId(deviceId, row.seq, 'submission'), { runId: e.runId }));
      break;
    }
    case 'reading': {
      const r = row.payload as ReadingRow;
      changes = [
        r.replacesId
          ? change(row, 0, 'correction', r.id, { of: 'reading', runId: r.runId, replacesId: r.replacesId, reason: r.reason ?? '', withdraw: r.voided, timeS: r.timeS, pH: r.pH, mV: r.mV })
          : change(row, 0, 'reading', r.id, { runId: r.runId, timeS: r.timeS, pH: r.pH, mV: r.mV }),
      ];
      break;
    }
    case 'checkpoint': {
      const c = row.payload as CheckpointRow;
      changes = [
        c.replacesId
          ? change(row, 0, 'correction', c.id, { of: 'checkpoint', runId: c.runId, replacesId: c.replacesId, reason: c.reason ?? '', withdraw: c.voided, timeS: c.timeS, buretteMl: c.buretteMl })
          : change(row, 0, 'checkpoint', c.id, { runId: c.runId, timeS: c.timeS, buretteMl: c.buretteMl }),
      ];
      break;
    }
    default:
      return { kind: 'invalid', reason: `This app does not know how to send a "${String((row as OutboxRow).entity)}".` };
  }
  // The envelope (ids, sequence) must be valid or the whole batch would be refused; payloads the server judges.
  for (const c of changes) {
    if (isQuickChange(c)) continue;
    const ok = changeSchema.safeParse(c);
    if (!ok.success) return { kind: 'invalid', reason: ok.error.issues.map((i) => i.message).join('; ') };
  }
  return changes.length ? { kind: 'send', changes } : { kind: 'local-only' };
}
