import { describe, expect, it } from 'vitest';
import type { OutboxRow } from '../local/types';
import { editId, SLOTS, toChanges } from './changes';

const DEV = '0190a3b0-0000-7000-8000-0000000000d1';
const LAB = '0190a3b0-0000-7000-8000-000000000001';
const RUN = '0190a3b0-0000-7000-8000-0000000000a1';
const ctx = { deviceId: DEV, runLab: async () => LAB };
const row = (seq: number, entity: OutboxRow['entity'], op: OutboxRow['op'], payload: unknown): OutboxRow => ({
  seq, entity, recordId: (payload as { id: string }).id, op, payload, createdWallMs: 1_700_000_000_000, state: 'pending', attempts: 0, lastError: null,
});

describe('outbox rows to protocol changes', () => {
  it('a metadata edit becomes one change per field, with ids and sequence numbers that repeat on replay', async () => {
    const r = row(7, 'run', 'update', { id: RUN, label: 'KHP 2', notes: 'rinsed', baseServerVersion: 3 });
    const a = await toChanges(r, ctx);
    const b = await toChanges(r, ctx);
    expect(a).toEqual(b);
    if (a.kind !== 'send') throw new Error(a.kind);
    expect(a.changes.map((c) => [c.kind, c.seq, (c.payload as { field: string }).field])).toEqual([
      ['run_meta_edit', 7 * SLOTS, 'notes'],
      ['run_meta_edit', 7 * SLOTS + 1, 'sampleName'],
    ]);
    expect(a.changes[0].id).toBe(editId(DEV, 7, 'notes'));
    expect(a.changes[0].payload).toMatchObject({ runId: RUN, value: 'rinsed', baseVersion: 3 });
  });

  it('a submit event also sends a submission; a correction names what it replaces; a mark stays local', async () => {
    const ev = await toChanges(row(3, 'run_event', 'insert', { id: '0190a3b0-0000-7000-8000-0000000000e1', runId: RUN, kind: 'submit', monoMs: 5, wallMs: 1, data: null }), ctx);
    expect(ev.kind === 'send' && ev.changes.map((c) => c.kind)).toEqual(['run_event', 'submission']);
    const fix = await toChanges(
      row(4, 'reading', 'insert', { id: '0190a3b0-0000-7000-8000-0000000000f1', runId: RUN, markId: 'm', timeS: 12, pH: 5.05, mV: null, pHSource: 'typed', replacesId: '0190a3b0-0000-7000-8000-0000000000f0', reason: 'typo', voided: false, wallMs: 1 }),
      ctx,
    );
    expect(fix.kind === 'send' && fix.changes[0]).toMatchObject({ kind: 'correction', payload: { of: 'reading', replacesId: '0190a3b0-0000-7000-8000-0000000000f0', reason: 'typo', pH: 5.05 } });
    expect(await toChanges(row(5, 'mark', 'insert', { id: 'x' }), ctx)).toEqual({ kind: 'local-only' });
  });

  it('a record whose id is not a UUID is refused on the device instead of sinking the whole batch', async () => {
    const bad = await toChanges(row(6, 'reading', 'insert', { id: 'not-a-uuid', runId: RUN, timeS: 1, pH: 4, mV: null, replacesId: null }), ctx);
    expect(bad.kind).toBe('invalid');
  });
});
