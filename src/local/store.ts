/* eslint-disable @typescript-eslint/no-explicit-any -- rows come back from SQLite untyped; the *FromSql mappers
   at the bottom are the typed boundary. */
// Repository over the local database. Every write is one transaction that also appends the record to the outbox,
// and resolves only after COMMIT: the UI shows a reading as saved only once this promise has resolved.
// Writes are queued one at a time because expo-sqlite on web has no exclusive transactions (a second BEGIN from an
// interleaved write would fail or join the first).
import type { SQLiteDatabase } from 'expo-sqlite';
import { newId } from './ids';
import type {
  CheckpointRow,
  DeviceRow,
  MarkKind,
  MarkRow,
  OutboxRow,
  PHSource,
  ReadingRow,
  RunEventKind,
  RunEventRow,
  RunRecord,
  RunRow,
  RunStatus,
} from './types';

type Db = Pick<SQLiteDatabase, 'runAsync' | 'getAllAsync' | 'getFirstAsync' | 'execAsync'>;
type Entity = OutboxRow['entity'];

const STATUS_AFTER: Partial<Record<RunEventKind, RunStatus>> = {
  start: 'running',
  pause: 'paused',
  resume: 'running',
  finish: 'finished',
  submit: 'submitted',
};

export const LOCAL_ANALYST = { id: 'local-analyst', name: 'Analyst on this device' } as const;

export class LocalStore {
  private queue: Promise<unknown> = Promise.resolve();
  private readonly committed = new Set<() => void>();
  private constructor(
    private readonly db: Db,
    readonly device: DeviceRow,
  ) {}

  static async open(db: Db, now = Date.now()): Promise<LocalStore> {
    let row = await db.getFirstAsync<{ id: string; analyst_id: string; analyst_name: string }>('SELECT * FROM device LIMIT 1');
    if (!row) {
      const id = newId();
      await db.runAsync('INSERT INTO device (id, created_wall_ms, analyst_id, analyst_name) VALUES (?, ?, ?, ?)', id, now, LOCAL_ANALYST.id, LOCAL_ANALYST.name);
      row = await db.getFirstAsync('SELECT * FROM device LIMIT 1');
      // Read back what was written: if the database silently drops writes, say so now rather than after a run.
      if (!row || row.id !== id) throw new Error('the local database did not keep a test write');
    }
    return new LocalStore(db, { id: row.id, analystId: row.analyst_id, analystName: row.analyst_name });
  }

  /**
   * Calls `fn` after each recording write has committed (not after the sync's own writes, which would loop).
   * The sync uses it to send new readings promptly, so colleagues following the run see them.
   */
  onCommitted(fn: () => void): () => void {
    this.committed.add(fn);
    return () => this.committed.delete(fn);
  }

  /** Runs `work` inside BEGIN…COMMIT after every earlier write has finished. */
  private write<T>(work: () => Promise<T>, notify = true): Promise<T> {
    const next = this.queue.then(async () => {
      await this.db.execAsync('BEGIN');
      try {
        const out = await work();
        await this.db.execAsync('COMMIT');
        return out;
      } catch (e) {
        await this.db.execAsync('ROLLBACK').catch(() => undefined);
        throw e;
      }
    });
    this.queue = next.catch(() => undefined);
    if (notify) void next.then(() => this.committed.forEach((fn) => fn()), () => undefined);
    return next;
  }

  /**
   * For the sync (src/sync/localStore.ts) only: runs `work` as one transaction in the same write queue as every
   * other write here, so its statements never interleave with a recording.
   */
  syncWrite<T>(work: (db: Db) => Promise<T>): Promise<T> {
    return this.write(() => work(this.db), false);
  }

  /** For the sync: read access to the same database. */
  get syncDb(): Db {
    return this.db;
  }

  private async outbox(entity: Entity, recordId: string, op: 'insert' | 'update', payload: unknown): Promise<void> {
    await this.db.runAsync(
      'INSERT INTO outbox (entity, record_id, op, payload_json, created_wall_ms) VALUES (?, ?, ?, ?, ?)',
      entity,
      recordId,
      op,
      JSON.stringify(payload),
      Date.now(),
    );
  }

  // ---------- runs ----------

  createRun(input: { label: string; setup: unknown; labId?: string | null }): Promise<RunRow> {
    return this.write(async () => {
      const now = Date.now();
      const run: RunRow = {
        id: newId(),
        deviceId: this.device.id,
        analystId: this.device.analystId,
        labId: input.labId ?? null,
        label: input.label,
        setup: input.setup,
        status: 'ready',
        notes: '',
        createdWallMs: now,
        updatedWallMs: now,
        localVersion: 1,
        serverVersion: null,
      };
      await this.db.runAsync(
        `INSERT INTO runs (id, device_id, analyst_id, lab_id, label, setup_json, status, notes, created_wall_ms, updated_wall_ms)
         VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
        run.id, run.deviceId, run.analystId, run.labId, run.label, JSON.stringify(run.setup), run.status, run.notes, now, now,
      );
      await this.outbox('run', run.id, 'insert', run);
      return run;
    });
  }

  async listRuns(): Promise<(RunRow & { readingCount: number })[]> {
    const rows = await this.db.getAllAsync<RunSql & { reading_count: number }>(
      `SELECT r.*, (SELECT count(*) FROM readings x WHERE x.run_id = r.id AND x.replaces_id IS NULL) AS reading_count
       FROM runs r ORDER BY r.created_wall_ms DESC`,
    );
    return rows.map((r) => ({ ...runFromSql(r), readingCount: r.reading_count }));
  }

  async loadRun(id: string): Promise<RunRecord | null> {
    const r = await this.db.getFirstAsync<RunSql>('SELECT * FROM runs WHERE id = ?', id);
    if (!r) return null;
    const [events, marks, readings, checkpoints] = await Promise.all([
      this.db.getAllAsync<any>('SELECT * FROM run_events WHERE run_id = ? ORDER BY mono_ms, id', id),
      this.db.getAllAsync<any>('SELECT * FROM marks WHERE run_id = ? ORDER BY time_s, id', id),
      this.db.getAllAsync<any>('SELECT * FROM readings WHERE run_id = ? ORDER BY wall_ms, id', id),
      this.db.getAllAsync<any>('SELECT * FROM checkpoints WHERE run_id = ? ORDER BY wall_ms, id', id),
    ]);
    return {
      run: runFromSql(r),
      events: events.map(eventFromSql),
      marks: marks.map(markFromSql),
      readings: readings.map(readingFromSql),
      checkpoints: checkpoints.map(checkpointFromSql),
    };
  }

  /** Edits label or notes: bumps the local version; the sync sends it with the server version it was based on. */
  updateRunMeta(id: string, patch: { label?: string; notes?: string }): Promise<RunRow> {
    return this.write(async () => {
      const r = await this.db.getFirstAsync<RunSql>('SELECT * FROM runs WHERE id = ?', id);
      if (!r) throw new Error(`run ${id} is not on this device`);
      const run = runFromSql(r);
      const next: RunRow = { ...run, ...patch, localVersion: run.localVersion + 1, updatedWallMs: Date.now() };
      await this.db.runAsync('UPDATE runs SET label = ?, notes = ?, local_version = ?, updated_wall_ms = ? WHERE id = ?', next.label, next.notes, next.localVersion, next.updatedWallMs, id);
      await this.outbox('run', id, 'update', { id, label: next.label, notes: next.notes, baseServerVersion: run.serverVersion, localVersion: next.localVersion });
      return next;
    });
  }

  /** A run event (clock, refill, discarded mark, submission); clock events also move the run's status. */
  addEvent(runId: string, kind: RunEventKind, at: { monoMs: number; wallMs: number }, data: Record<string, unknown> | null = null): Promise<RunEventRow> {
    return this.write(async () => {
      const ev: RunEventRow = { id: newId(), runId, kind, monoMs: at.monoMs, wallMs: at.wallMs, data };
      await this.db.runAsync(
        'INSERT INTO run_events (id, run_id, kind, mono_ms, wall_ms, data_json) VALUES (?, ?, ?, ?, ?, ?)',
        ev.id, runId, kind, ev.monoMs, ev.wallMs, data ? JSON.stringify(data) : null,
      );
      await this.outbox('run_event', ev.id, 'insert', ev);
      const status = STATUS_AFTER[kind];
      if (status) {
        const res = await this.db.runAsync('UPDATE runs SET status = ?, updated_wall_ms = ?, local_version = local_version + 1 WHERE id = ?', status, ev.wallMs, runId);
        if (res.changes !== 1) throw new Error(`run ${runId} is not on this device`);
        await this.outbox('run', runId, 'update', { id: runId, status });
      }
      return ev;
    });
  }

  addMark(runId: string, kind: MarkKind, timeS: number, at: { monoMs: number; wallMs: number }): Promise<MarkRow> {
    return this.write(async () => {
      const m: MarkRow = { id: newId(), runId, kind, timeS, monoMs: at.monoMs, wallMs: at.wallMs };
      await this.db.runAsync('INSERT INTO marks (id, run_id, kind, time_s, mono_ms, wall_ms) VALUES (?, ?, ?, ?, ?, ?)', m.id, runId, kind, timeS, m.monoMs, m.wallMs);
      await this.outbox('mark', m.id, 'insert', m);
      return m;
    });
  }

  /** The value typed for a mark; its time is the mark's (taken at the tap), never the moment of typing. */
  addReading(mark: MarkRow, value: { pH: number | null; mV: number | null; pHSource: PHSource }): Promise<ReadingRow> {
    return this.insertReading({ mark, ...value, replacesId: null, reason: null, voided: false });
  }

  correctReading(original: ReadingRow, value: { pH: number | null; mV: number | null; pHSource: PHSource }, reason: string): Promise<ReadingRow> {
    return this.insertReading({ mark: { id: original.markId, runId: original.runId, timeS: original.timeS }, ...value, replacesId: original.id, reason: requireReason(reason), voided: false });
  }

  deleteReading(original: ReadingRow, reason: string): Promise<ReadingRow> {
    return this.insertReading({ mark: { id: original.markId, runId: original.runId, timeS: original.timeS }, pH: null, mV: null, pHSource: 'void', replacesId: original.id, reason: requireReason(reason), voided: true });
  }

  private insertReading(x: { mark: Pick<MarkRow, 'id' | 'runId' | 'timeS'>; pH: number | null; mV: number | null; pHSource: PHSource; replacesId: string | null; reason: string | null; voided: boolean }): Promise<ReadingRow> {
    return this.write(async () => {
      const r: ReadingRow = { id: newId(), runId: x.mark.runId, markId: x.mark.id, timeS: x.mark.timeS, pH: x.pH, mV: x.mV, pHSource: x.pHSource, replacesId: x.replacesId, reason: x.reason, voided: x.voided, wallMs: Date.now() };
      await this.db.runAsync(
        `INSERT INTO readings (id, run_id, mark_id, time_s, ph, mv, ph_source, replaces_id, reason, voided, wall_ms) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
        r.id, r.runId, r.markId, r.timeS, r.pH, r.mV, r.pHSource, r.replacesId, r.reason, r.voided ? 1 : 0, r.wallMs,
      );
      await this.outbox('reading', r.id, 'insert', r);
      return r;
    });
  }

  addCheckpoint(mark: MarkRow, buretteMl: number): Promise<CheckpointRow> {
    return this.insertCheckpoint({ mark, buretteMl, replacesId: null, reason: null, voided: false });
  }

  correctCheckpoint(original: CheckpointRow, buretteMl: number | null, reason: string): Promise<CheckpointRow> {
    return this.insertCheckpoint({ mark: { id: original.markId, runId: original.runId, timeS: original.timeS }, buretteMl, replacesId: original.id, reason: requireReason(reason), voided: buretteMl === null });
  }

  private insertCheckpoint(x: { mark: Pick<MarkRow, 'id' | 'runId' | 'timeS'>; buretteMl: number | null; replacesId: string | null; reason: string | null; voided: boolean }): Promise<CheckpointRow> {
    return this.write(async () => {
      const c: CheckpointRow = { id: newId(), runId: x.mark.runId, markId: x.mark.id, timeS: x.mark.timeS, buretteMl: x.buretteMl, replacesId: x.replacesId, reason: x.reason, voided: x.voided, wallMs: Date.now() };
      await this.db.runAsync(
        'INSERT INTO checkpoints (id, run_id, mark_id, time_s, burette_ml, replaces_id, reason, voided, wall_ms) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)',
        c.id, c.runId, c.markId, c.timeS, c.buretteMl, c.replacesId, c.reason, c.voided ? 1 : 0, c.wallMs,
      );
      await this.outbox('checkpoint', c.id, 'insert', c);
      return c;
    });
  }

  // ---------- outbox (for the sync) ----------

  async pendingOutbox(limit = 500): Promise<OutboxRow[]> {
    const rows = await this.db.getAllAsync<any>("SELECT * FROM outbox WHERE state IN ('pending', 'sent') ORDER BY seq LIMIT ?", limit);
    return rows.map((o) => ({ seq: o.seq, entity: o.entity, recordId: o.record_id, op: o.op, payload: JSON.parse(o.payload_json), createdWallMs: o.created_wall_ms, state: o.state, attempts: o.attempts, lastError: o.last_error }));
  }

  async outboxCounts(): Promise<Record<OutboxRow['state'], number>> {
    const rows = await this.db.getAllAsync<{ state: OutboxRow['state']; n: number }>('SELECT state, count(*) AS n FROM outbox GROUP BY state');
    const out = { pending: 0, sent: 0, acked: 0, rejected: 0 };
    for (const r of rows) out[r.state] = r.n;
    return out;
  }
}

function requireReason(reason: string): string {
  const r = reason.trim();
  if (!r) throw new Error('A correction needs a reason.');
  return r;
}

interface RunSql {
  id: string;
  device_id: string;
  analyst_id: string;
  lab_id: string | null;
  label: string;
  setup_json: string;
  status: RunStatus;
  notes: string;
  created_wall_ms: number;
  updated_wall_ms: number;
  local_version: number;
  server_version: number | null;
}

function runFromSql(r: RunSql): RunRow {
  return {
    id: r.id,
    deviceId: r.device_id,
    analystId: r.analyst_id,
    labId: r.lab_id,
    label: r.label,
    setup: JSON.parse(r.setup_json),
    status: r.status,
    notes: r.notes,
    createdWallMs: r.created_wall_ms,
    updatedWallMs: r.updated_wall_ms,
    localVersion: r.local_version,
    serverVersion: r.server_version,
  };
}
const eventFromSql = (e: any): RunEventRow => ({ id: e.id, runId: e.run_id, kind: e.kind, monoMs: e.mono_ms, wallMs: e.wall_ms, data: e.data_json ? JSON.parse(e.data_json) : null });
const markFromSql = (m: any): MarkRow => ({ id: m.id, runId: m.run_id, kind: m.kind, timeS: m.time_s, monoMs: m.mono_ms, wallMs: m.wall_ms });
const readingFromSql = (r: any): ReadingRow => ({ id: r.id, runId: r.run_id, markId: r.mark_id, timeS: r.time_s, pH: r.ph, mV: r.mv, pHSource: r.ph_source, replacesId: r.replaces_id, reason: r.reason, voided: r.voided === 1, wallMs: r.wall_ms });
const checkpointFromSql = (c: any): CheckpointRow => ({ id: c.id, runId: c.run_id, markId: c.mark_id, timeS: c.time_s, buretteMl: c.burette_ml, replacesId: c.replaces_id, reason: c.reason, voided: c.voided === 1, wallMs: c.wall_ms });
