// An in-memory device for tests: the few recording calls of src/local's LocalStore (same outbox rows) plus the
// SyncStore the engine needs. Its state stands for what survived on disk, so a "crash" is dropping the engine.
import { v7 } from 'uuid';
import type { PulledChange } from '../../shared/schemas/sync';
import type { OutboxRow, ReadingRow, RunRow } from '../local/types';
import type { Settlement, SyncStore } from './engine';

export class MemoryDevice implements SyncStore {
  readonly deviceId = v7();
  runs = new Map<string, RunRow>();
  readings = new Map<string, ReadingRow>();
  outbox: OutboxRow[] = [];
  /** The outbox rows by seq: settling a 10,000-row push would otherwise search the outbox once per row. */
  private outboxBySeq = new Map<number, OutboxRow>();
  /** Each row's payload as JSON text, as the device's SQLite outbox keeps it (payload_json). */
  private payloadJson = new Map<number, string>();
  /** Records pulled from the server, by entity and id. */
  pulled = new Map<string, Map<string, unknown>>();
  conflicts: (Settlement['meta'] & object)[number][] = [];
  cursor = 0;
  private seq = 0;
  private wall: () => number;

  constructor(
    readonly analystId: string,
    /** The device's wall clock (may be far off). */
    wall: () => number = Date.now,
  ) {
    this.wall = wall;
  }

  private queue(entity: OutboxRow['entity'], recordId: string, op: OutboxRow['op'], payload: unknown) {
    const row: OutboxRow = { seq: ++this.seq, entity, recordId, op, payload: structuredClone(payload), createdWallMs: this.wall(), state: 'pending', attempts: 0, lastError: null };
    this.outbox.push(row);
    this.outboxBySeq.set(row.seq, row);
    this.payloadJson.set(row.seq, JSON.stringify(payload));
  }

  createRun(labId: string, label = 'KHP demo run'): RunRow {
    const now = this.wall();
    const run: RunRow = { id: v7(), deviceId: this.deviceId, analystId: this.analystId, labId, label, setup: { demo: true }, status: 'ready', notes: '', createdWallMs: now, updatedWallMs: now, localVersion: 1, serverVersion: null };
    this.runs.set(run.id, run);
    this.queue('run', run.id, 'insert', run);
    return run;
  }

  addReading(runId: string, timeS: number, pH: number): ReadingRow {
    const markId = v7();
    this.queue('mark', markId, 'insert', { id: markId, runId, kind: 'reading', timeS, monoMs: timeS * 1000, wallMs: this.wall() });
    const r: ReadingRow = { id: v7(), runId, markId, timeS, pH, mV: null, pHSource: 'typed', replacesId: null, reason: null, voided: false, wallMs: this.wall() };
    this.readings.set(r.id, r);
    this.queue('reading', r.id, 'insert', r);
    return r;
  }

  correctReading(original: ReadingRow, pH: number, reason: string): ReadingRow {
    const r: ReadingRow = { ...original, id: v7(), pH, replacesId: original.id, reason, wallMs: this.wall() };
    this.readings.set(r.id, r);
    this.queue('reading', r.id, 'insert', r);
    return r;
  }

  editNotes(runId: string, notes: string): void {
    const run = this.runs.get(runId)!;
    const next = { ...run, notes, localVersion: run.localVersion + 1 };
    this.runs.set(runId, next);
    this.queue('run', runId, 'update', { id: runId, label: run.label, notes, baseServerVersion: run.serverVersion, localVersion: next.localVersion });
  }

  // ---------- SyncStore ----------

  async pendingOutbox(limit: number) {
    const out: OutboxRow[] = [];
    for (const o of this.outbox) {
      if (out.length >= limit) break;
      // Fresh copies with the payload decoded from its JSON text (a mark's left out), as the SQLite store hands them out.
      if (o.state === 'pending' || o.state === 'sent') out.push({ ...o, payload: o.entity === 'mark' ? null : JSON.parse(this.payloadJson.get(o.seq)!) });
    }
    return out;
  }
  async runLab(runId: string) {
    return this.runs.get(runId)?.labId ?? null;
  }
  async settle(list: Settlement[]) {
    for (const s of list) {
      const row = this.outboxBySeq.get(s.seq)!;
      row.state = s.state;
      row.lastError = s.reason ?? null;
      for (const m of s.meta ?? []) {
        const run = this.runs.get(m.runId);
        if (!run) continue;
        const patch: Partial<RunRow> = { serverVersion: Math.max(run.serverVersion ?? 0, m.version) };
        if (m.conflict) {
          this.conflicts.push(m);
          if (m.field === 'notes') patch.notes = m.value;
        }
        this.runs.set(m.runId, { ...run, ...patch });
      }
    }
  }
  async counts() {
    return {
      waiting: this.outbox.filter((o) => o.state === 'pending' || o.state === 'sent').length,
      rejected: this.outbox.filter((o) => o.state === 'rejected').length,
    };
  }
  async pullCursor() {
    return this.cursor;
  }
  async applyPulled(changes: PulledChange[], cursor: number) {
    for (const c of changes) {
      const rec = c.record as { id: string };
      let m = this.pulled.get(c.entity);
      if (!m) this.pulled.set(c.entity, (m = new Map()));
      m.set(rec.id, rec);
      if (c.entity === 'run') {
        const r = rec as unknown as { id: string; notes: string; version: number };
        const mine = this.runs.get(r.id);
        // Take the server's notes only when no local edit is still waiting to go out.
        const waiting = this.outbox.some((o) => o.entity === 'run' && o.recordId === r.id && o.op === 'update' && (o.state === 'pending' || o.state === 'sent'));
        if (mine && !waiting) this.runs.set(r.id, { ...mine, notes: r.notes, serverVersion: r.version });
      }
    }
    this.cursor = cursor;
  }
}
