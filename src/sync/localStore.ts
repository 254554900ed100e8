// The engine's SyncStore over the bench's local database (src/local). Writes go through LocalStore.syncWrite, the
// same queue as recording, so a settle never interleaves with a tap. Pulled records and the cursor live in two
// tables of the sync's own (created here, IF NOT EXISTS), apart from the device's own records.
import type { PulledChange } from '../../shared/schemas/sync';
import type { LocalStore } from '../local/store';
import type { OutboxRow } from '../local/types';
import type { Settlement, SyncStore } from './engine';

const SCHEMA = `
CREATE TABLE IF NOT EXISTS sync_state (key TEXT PRIMARY KEY NOT NULL, value TEXT NOT NULL);
-- Records of the lab as pulled from the server (colleagues' runs and readings, calibrations, titrants), latest state.
CREATE TABLE IF NOT EXISTS sync_pulled (
  entity TEXT NOT NULL,
  id TEXT NOT NULL,
  run_id TEXT,
  seq INTEGER NOT NULL,
  record_json TEXT NOT NULL,
  PRIMARY KEY (entity, id)
);
CREATE INDEX IF NOT EXISTS sync_pulled_run ON sync_pulled (run_id, entity);
-- Metadata edits that lost to one that reached the server first: shown on the run until dismissed.
CREATE TABLE IF NOT EXISTS sync_conflicts (
  run_id TEXT NOT NULL,
  field TEXT NOT NULL,
  kept_value TEXT NOT NULL,
  at_wall_ms INTEGER NOT NULL
);
`;

export interface SyncStoreOptions {
  /**
   * The lab a run recorded without one goes to (the bench records before anyone picks a lab): the active lab of
   * whoever is signed in when it first syncs. Null: the run waits.
   */
  defaultLab?: () => string | null;
}

export async function openSyncStore(local: LocalStore, opts: SyncStoreOptions = {}): Promise<SqliteSyncStore> {
  await local.syncDb.execAsync(SCHEMA);
  return new SqliteSyncStore(local, opts);
}

const COLUMN: Record<string, string> = { notes: 'notes', sampleName: 'label', status: 'status' };

export class SqliteSyncStore implements SyncStore {
  constructor(
    private readonly local: LocalStore,
    private readonly opts: SyncStoreOptions = {},
  ) {}

  get deviceId(): string {
    return this.local.device.id;
  }

  pendingOutbox(limit: number): Promise<OutboxRow[]> {
    return this.local.pendingOutbox(limit);
  }

  async runLab(runId: string): Promise<string | null> {
    const r = await this.local.syncDb.getFirstAsync<{ lab_id: string | null }>('SELECT lab_id FROM runs WHERE id = ?', runId);
    if (!r) return null;
    if (r.lab_id) return r.lab_id;
    const lab = this.opts.defaultLab?.() ?? null;
    if (!lab) return null;
    // Kept on the run, so every later change of it (and any replay) goes to the same lab.
    await this.local.syncWrite((db) => db.runAsync('UPDATE runs SET lab_id = ? WHERE id = ? AND lab_id IS NULL', lab, runId));
    const again = await this.local.syncDb.getFirstAsync<{ lab_id: string | null }>('SELECT lab_id FROM runs WHERE id = ?', runId);
    return again?.lab_id ?? null;
  }

  settle(list: Settlement[]): Promise<void> {
    return this.local.syncWrite(async (db) => {
      for (const s of list) {
        await db.runAsync('UPDATE outbox SET state = ?, last_error = ?, attempts = attempts + 1 WHERE seq = ?', s.state, s.reason ?? null, s.seq);
        for (const m of s.meta ?? []) {
          await db.runAsync('UPDATE runs SET server_version = max(coalesce(server_version, 0), ?) WHERE id = ?', m.version, m.runId);
          if (m.conflict && COLUMN[m.field]) {
            // The server kept the other value: show it, and say so on the run. This device's edit is in the
            // server's history (nothing is lost).
            await db.runAsync(`UPDATE runs SET ${COLUMN[m.field]} = ? WHERE id = ?`, m.value, m.runId);
            await db.runAsync('INSERT INTO sync_conflicts (run_id, field, kept_value, at_wall_ms) VALUES (?, ?, ?, ?)', m.runId, m.field, m.value, Date.now());
          }
        }
      }
    });
  }

  async counts(): Promise<{ waiting: number; rejected: number }> {
    const c = await this.local.outboxCounts();
    return { waiting: c.pending + c.sent, rejected: c.rejected };
  }

  /** Rejected rows with their reasons, newest first, for the indicator's detail. */
  async rejected(limit = 50): Promise<{ seq: number; entity: string; recordId: string; reason: string | null }[]> {
    const rows = await this.local.syncDb.getAllAsync<{ seq: number; entity: string; record_id: string; last_error: string | null }>(
      "SELECT seq, entity, record_id, last_error FROM outbox WHERE state = 'rejected' ORDER BY seq DESC LIMIT ?",
      limit,
    );
    return rows.map((r) => ({ seq: r.seq, entity: r.entity, recordId: r.record_id, reason: r.last_error }));
  }

  async pullCursor(): Promise<number> {
    const r = await this.local.syncDb.getFirstAsync<{ value: string }>("SELECT value FROM sync_state WHERE key = 'cursor'");
    return r ? Number(r.value) : 0;
  }

  applyPulled(changes: PulledChange[], cursor: number): Promise<void> {
    return this.local.syncWrite(async (db) => {
      for (const c of changes) {
        const rec = c.record as { id: string; runId?: string };
        await db.runAsync(
          'INSERT INTO sync_pulled (entity, id, run_id, seq, record_json) VALUES (?, ?, ?, ?, ?) ON CONFLICT (entity, id) DO UPDATE SET seq = excluded.seq, record_json = excluded.record_json',
          c.entity,
          rec.id,
          rec.runId ?? (c.entity === 'run' ? rec.id : null),
          c.seq,
          JSON.stringify(c.record),
        );
        if (c.entity === 'run') {
          const r = c.record as { id: string; notes: string; sampleName: string; version: number };
          // A run of this device: take the server's metadata unless a local edit is still waiting to go out.
          await db.runAsync(
            `UPDATE runs SET notes = ?, label = ?, server_version = ? WHERE id = ?
               AND NOT EXISTS (SELECT 1 FROM outbox o WHERE o.entity = 'run' AND o.record_id = runs.id AND o.op = 'update' AND o.state IN ('pending', 'sent'))`,
            r.notes,
            r.sampleName,
            r.version,
            r.id,
          );
        }
      }
      await db.runAsync("INSERT INTO sync_state (key, value) VALUES ('cursor', ?) ON CONFLICT (key) DO UPDATE SET value = excluded.value", String(cursor));
    });
  }
}
