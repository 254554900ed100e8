/* eslint-disable @typescript-eslint/no-explicit-any -- rows come back from SQLite untyped; the *FromSql mappers
   at the bottom are the typed boundary. */
// Repository over the local database. Every write appends its record to the outbox atomically with it and
// resolves only after COMMIT: the UI shows a reading as saved only once this promise has resolved.
// A recording (mark, reading, checkpoint, run event) is one INSERT into a view whose trigger stores the row and its
// outbox entry (migration 3): one statement, atomic on its own, one round trip to the database worker with the
// statement prepared once. Run creation and edits, and the sync's writes, are BEGIN…COMMIT transactions.
// Writes are queued one at a time because expo-sqlite on web has no exclusive transactions (a statement or a
// second BEGIN from an interleaved write would join or break an open transaction).
import type { SQLiteBindValue, SQLiteDatabase, SQLiteStatement } from 'expo-sqlite';
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

type Db = Pick<SQLiteDatabase, 'runAsync' | 'getAllAsync' | 'getFirstAsync' | 'execAsync' | 'prepareAsync'>;
type Entity = OutboxRow['entity'];

const STATUS_AFTER: Partial<Record<RunEventKind, RunStatus>> = {
  start: 'running',
  pause: 'paused',
  resume: 'running',
  finish: 'finished',
  submit: 'submitted',
};

/**
 * A recording on its way to the database: the row as it is being stored (known at once, so the screen can show it
 * as saving) and the promise that resolves with it after COMMIT, or rejects if it was not stored.
 */
export interface Recording<T> {
  row: T;
  saved: Promise<T>;
}

export type ReadingValue = { pH: number | null; mV: number | null; pHSource: PHSource };

// The recording statements (views of migration 3). Payloads are JSON.stringify of the row, as the sync expects.
const INSERT = {
  mark: 'INSERT INTO record_mark (id, run_id, kind, time_s, mono_ms, wall_ms, payload_json, queued_wall_ms) VALUES (?, ?, ?, ?, ?, ?, ?, ?)',
  reading:
    'INSERT INTO record_reading (id, run_id, mark_id, time_s, ph, mv, ph_source, replaces_id, reason, voided, wall_ms, payload_json, queued_wall_ms) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)',
  checkpoint:
    'INSERT INTO record_checkpoint (id, run_id, mark_id, time_s, burette_ml, replaces_id, reason, voided, wall_ms, payload_json, queued_wall_ms) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)',
  event:
    'INSERT INTO record_run_event (id, run_id, kind, mono_ms, wall_ms, data_json, payload_json, queued_wall_ms, status_after, status_payload_json) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)',
} as const;

/** What the bulk path of automation can record (see recordManyForAutomation). */
export interface BulkRecorder {
  mark(runId: string, kind: MarkKind, timeS: number, at: { monoMs: number; wallMs: number }): Promise<MarkRow>;
  reading(mark: Pick<MarkRow, 'id' | 'runId' | 'timeS'>, value: ReadingValue): Promise<ReadingRow>;
}

export const LOCAL_ANALYST = { id: 'local-analyst', name: 'Analyst on this device' } as const;

export class LocalStore {
  private queue: Promise<unknown> = Promise.resolve();
  private readonly committed = new Set<() => void>();
  private readonly statements = new Map<string, Promise<SQLiteStatement>>();
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

  /** Runs `work` after every earlier write has finished; `notify` tells onCommitted listeners once it succeeded. */
  private enqueue<T>(work: () => Promise<T>, notify: boolean): Promise<T> {
    const next = this.queue.then(work);
    this.queue = next.catch(() => undefined);
    if (notify) void next.then(() => this.committed.forEach((fn) => fn()), () => undefined);
    return next;
  }

  /** Runs `work` inside BEGIN…COMMIT after every earlier write has finished. */
  private write<T>(work: () => Promise<T>, notify = true): Promise<T> {
    return this.enqueue(async () => {
      await this.db.execAsync('BEGIN');
      try {
        const out = await work();
        await this.db.execAsync('COMMIT');
        return out;
      } catch (e) {
        await this.db.execAsync('ROLLBACK').catch(() => undefined);
        throw e;
      }
    }, notify);
  }

  /** One statement, prepared once per page and reused: a single round trip to the database worker. */
  private async runPrepared(sql: string, params: SQLiteBindValue[]): Promise<void> {
    let st = this.statements.get(sql);
    if (!st) {
      st = this.db.prepareAsync(sql);
      this.statements.set(sql, st);
    }
    try {
      await (await st).executeAsync(...params);
    } catch (e) {
      // Not reused after a failure: resetting a statement whose last step failed reports that failure again.
      this.statements.delete(sql);
      void st.then((x) => x.finalizeAsync()).catch(() => undefined);
      throw e;
    }
  }

  /** A recording: the row now, and its single-statement insert queued behind earlier writes. */
  private record<T>(row: T, insert: (row: T) => Promise<void>): Recording<T> {
    return { row, saved: this.enqueue(() => insert(row).then(() => row), true) };
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

  /**
   * Automation only (benchmarks seeding a long run; the page reaches the store only with the opt-in of
   * src/local/localDb.ts): many recordings in one transaction, with the same statements and outbox entries as
   * one by one. The app never uses it: the screen confirms each recording on its own commit.
   */
  recordManyForAutomation(work: (rec: BulkRecorder) => Promise<void>): Promise<void> {
    return this.write(() =>
      work({
        mark: async (runId, kind, timeS, at) => {
          const m = this.markRow(runId, kind, timeS, at);
          await this.insertMark(m);
          return m;
        },
        reading: async (mark, value) => {
          const r = this.readingRow({ mark, ...value, replacesId: null, reason: null, voided: false });
          await this.insertReadingRow(r);
          return r;
        },
      }),
    );
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
    const ev: RunEventRow = { id: newId(), runId, kind, monoMs: at.monoMs, wallMs: at.wallMs, data };
    const status = STATUS_AFTER[kind] ?? null;
    return this.record(ev, (e) =>
      this.runPrepared(INSERT.event, [
        e.id, runId, kind, e.monoMs, e.wallMs, data ? JSON.stringify(data) : null, JSON.stringify(e), Date.now(),
        status, status ? JSON.stringify({ id: runId, status }) : null,
      ]),
    ).saved;
  }

  /** A tap: the instant is fixed now; the value typed for it later keeps this time. */
  recordMark(runId: string, kind: MarkKind, timeS: number, at: { monoMs: number; wallMs: number }): Recording<MarkRow> {
    return this.record(this.markRow(runId, kind, timeS, at), (m) => this.insertMark(m));
  }

  addMark(runId: string, kind: MarkKind, timeS: number, at: { monoMs: number; wallMs: number }): Promise<MarkRow> {
    return this.recordMark(runId, kind, timeS, at).saved;
  }

  /** The value typed for a mark; its time is the mark's (taken at the tap), never the moment of typing. */
  recordReading(mark: Pick<MarkRow, 'id' | 'runId' | 'timeS'>, value: ReadingValue): Recording<ReadingRow> {
    return this.record(this.readingRow({ mark, ...value, replacesId: null, reason: null, voided: false }), (r) => this.insertReadingRow(r));
  }

  addReading(mark: Pick<MarkRow, 'id' | 'runId' | 'timeS'>, value: ReadingValue): Promise<ReadingRow> {
    return this.recordReading(mark, value).saved;
  }

  correctReading(original: ReadingRow, value: ReadingValue, reason: string): Promise<ReadingRow> {
    const r = this.readingRow({ mark: { id: original.markId, runId: original.runId, timeS: original.timeS }, ...value, replacesId: original.id, reason: requireReason(reason), voided: false });
    return this.record(r, (x) => this.insertReadingRow(x)).saved;
  }

  deleteReading(original: ReadingRow, reason: string): Promise<ReadingRow> {
    const r = this.readingRow({ mark: { id: original.markId, runId: original.runId, timeS: original.timeS }, pH: null, mV: null, pHSource: 'void', replacesId: original.id, reason: requireReason(reason), voided: true });
    return this.record(r, (x) => this.insertReadingRow(x)).saved;
  }

  recordCheckpoint(mark: Pick<MarkRow, 'id' | 'runId' | 'timeS'>, buretteMl: number): Recording<CheckpointRow> {
    return this.record(this.checkpointRow({ mark, buretteMl, replacesId: null, reason: null, voided: false }), (c) => this.insertCheckpointRow(c));
  }

  addCheckpoint(mark: Pick<MarkRow, 'id' | 'runId' | 'timeS'>, buretteMl: number): Promise<CheckpointRow> {
    return this.recordCheckpoint(mark, buretteMl).saved;
  }

  correctCheckpoint(original: CheckpointRow, buretteMl: number | null, reason: string): Promise<CheckpointRow> {
    const c = this.checkpointRow({ mark: { id: original.markId, runId: original.runId, timeS: original.timeS }, buretteMl, replacesId: original.id, reason: requireReason(reason), voided: buretteMl === null });
    return this.record(c, (x) => this.insertCheckpointRow(x)).saved;
  }

  private markRow(runId: string, kind: MarkKind, timeS: number, at: { monoMs: number; wallMs: number }): MarkRow {
    return { id: newId(), runId, kind, timeS, monoMs: at.monoMs, wallMs: at.wallMs };
  }

  private readingRow(x: { mark: Pick<MarkRow, 'id' | 'runId' | 'timeS'>; pH: number | null; mV: number | null; pHSource: PHSource; replacesId: string | null; reason: string | null; voided: boolean }): ReadingRow {
    return { id: newId(), runId: x.mark.runId, markId: x.mark.id, timeS: x.mark.timeS, pH: x.pH, mV: x.mV, pHSource: x.pHSource, replacesId: x.replacesId, reason: x.reason, voided: x.voided, wallMs: Date.now() };
  }

  private checkpointRow(x: { mark: Pick<MarkRow, 'id' | 'runId' | 'timeS'>; buretteMl: number | null; replacesId: string | null; reason: string | null; voided: boolean }): CheckpointRow {
    return { id: newId(), runId: x.mark.runId, markId: x.mark.id, timeS: x.mark.timeS, buretteMl: x.buretteMl, replacesId: x.replacesId, reason: x.reason, voided: x.voided, wallMs: Date.now() };
  }

  private insertMark(m: MarkRow): Promise<void> {
    return this.runPrepared(INSERT.mark, [m.id, m.runId, m.kind, m.timeS, m.monoMs, m.wallMs, JSON.stringify(m), Date.now()]);
  }

  private insertReadingRow(r: ReadingRow): Promise<void> {
    return this.runPrepared(INSERT.reading, [r.id, r.runId, r.markId, r.timeS, r.pH, r.mV, r.pHSource, r.replacesId, r.reason, r.voided ? 1 : 0, r.wallMs, JSON.stringify(r), Date.now()]);
  }

  private insertCheckpointRow(c: CheckpointRow): Promise<void> {
    return this.runPrepared(INSERT.checkpoint, [c.id, c.runId, c.markId, c.timeS, c.buretteMl, c.replacesId, c.reason, c.voided ? 1 : 0, c.wallMs, JSON.stringify(c), Date.now()]);
  }

  // ---------- outbox (for the sync) ----------

  /** Rows still to push, oldest first. A mark's payload is not read (null): a mark never goes out (see OutboxRow). */
  async pendingOutbox(limit = 500): Promise<OutboxRow[]> {
    const rows = await this.db.getAllAsync<any>(
      "SELECT seq, entity, record_id, op, CASE WHEN entity = 'mark' THEN NULL ELSE payload_json END AS payload_json, created_wall_ms, state, attempts, last_error FROM outbox WHERE state IN ('pending', 'sent') ORDER BY seq LIMIT ?",
      limit,
    );
    return rows.map((o) => ({ seq: o.seq, entity: o.entity, recordId: o.record_id, op: o.op, payload: o.payload_json === null ? null : JSON.parse(o.payload_json), createdWallMs: o.created_wall_ms, state: o.state, attempts: o.attempts, lastError: o.last_error }));
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
