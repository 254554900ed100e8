// Local schema of the on-device database, one step per version (PRAGMA user_version holds the version reached).
// Records are append-only where the science needs it: a correction or deletion is a new row pointing at the row it
// replaces, with a reason. Every write also appends to `outbox` atomically with it, for the sync to push.
export interface Migration {
  version: number;
  sql: string;
}

export const MIGRATIONS: Migration[] = [
  {
    version: 1,
    sql: `
CREATE TABLE device (
  id TEXT PRIMARY KEY NOT NULL,
  created_wall_ms INTEGER NOT NULL,
  -- Until sign-in exists the analyst is a local placeholder; the account id replaces it on first sign-in.
  analyst_id TEXT NOT NULL,
  analyst_name TEXT NOT NULL
);

CREATE TABLE runs (
  id TEXT PRIMARY KEY NOT NULL,
  device_id TEXT NOT NULL,
  analyst_id TEXT NOT NULL,
  lab_id TEXT,
  label TEXT NOT NULL,
  -- RunSetup as JSON (sample, titrant, delivery, electrode, temperature, plan inputs), validated before insert.
  setup_json TEXT NOT NULL,
  status TEXT NOT NULL CHECK (status IN ('ready', 'running', 'paused', 'finished', 'submitted')),
  notes TEXT NOT NULL DEFAULT '',
  created_wall_ms INTEGER NOT NULL,
  updated_wall_ms INTEGER NOT NULL,
  -- Editable metadata (label, notes, status) is versioned: local_version counts local edits, server_version is the
  -- version the server last confirmed (null until synced).
  local_version INTEGER NOT NULL DEFAULT 1,
  server_version INTEGER
);

CREATE TABLE run_events (
  id TEXT PRIMARY KEY NOT NULL,
  run_id TEXT NOT NULL REFERENCES runs(id),
  kind TEXT NOT NULL CHECK (kind IN ('start', 'pause', 'resume', 'finish', 'refill', 'discard-mark', 'submit', 'clock-gap')),
  mono_ms REAL NOT NULL,
  wall_ms INTEGER NOT NULL,
  data_json TEXT
);
CREATE INDEX run_events_run ON run_events (run_id, mono_ms);

-- The moment of a tap (pointer-down), before its value is typed.
CREATE TABLE marks (
  id TEXT PRIMARY KEY NOT NULL,
  run_id TEXT NOT NULL REFERENCES runs(id),
  kind TEXT NOT NULL CHECK (kind IN ('reading', 'checkpoint')),
  time_s REAL NOT NULL CHECK (time_s >= 0),
  mono_ms REAL NOT NULL,
  wall_ms INTEGER NOT NULL
);
CREATE INDEX marks_run ON marks (run_id, time_s);

CREATE TABLE readings (
  id TEXT PRIMARY KEY NOT NULL,
  run_id TEXT NOT NULL REFERENCES runs(id),
  mark_id TEXT NOT NULL REFERENCES marks(id),
  time_s REAL NOT NULL CHECK (time_s >= 0),
  ph REAL,
  mv REAL,
  -- 'typed' (pH from the meter), 'mv-calibrated' (converted with the electrode calibration), 'mv-only' (no pH).
  ph_source TEXT NOT NULL CHECK (ph_source IN ('typed', 'mv-calibrated', 'mv-only', 'void')),
  replaces_id TEXT REFERENCES readings(id),
  reason TEXT,
  voided INTEGER NOT NULL DEFAULT 0 CHECK (voided IN (0, 1)),
  wall_ms INTEGER NOT NULL,
  CHECK (replaces_id IS NULL OR (reason IS NOT NULL AND length(reason) > 0)),
  CHECK (voided = 0 OR replaces_id IS NOT NULL),
  CHECK (voided = 1 OR ph IS NOT NULL OR mv IS NOT NULL)
);
-- One original reading per mark: a double confirm cannot record a tap twice.
CREATE UNIQUE INDEX readings_one_per_mark ON readings (mark_id) WHERE replaces_id IS NULL;
-- A row is replaced at most once; later corrections replace the correction.
CREATE UNIQUE INDEX readings_replaced_once ON readings (replaces_id) WHERE replaces_id IS NOT NULL;
CREATE INDEX readings_run ON readings (run_id, time_s);

CREATE TABLE checkpoints (
  id TEXT PRIMARY KEY NOT NULL,
  run_id TEXT NOT NULL REFERENCES runs(id),
  mark_id TEXT NOT NULL REFERENCES marks(id),
  time_s REAL NOT NULL CHECK (time_s >= 0),
  burette_ml REAL,
  replaces_id TEXT REFERENCES checkpoints(id),
  reason TEXT,
  voided INTEGER NOT NULL DEFAULT 0 CHECK (voided IN (0, 1)),
  wall_ms INTEGER NOT NULL,
  CHECK (replaces_id IS NULL OR (reason IS NOT NULL AND length(reason) > 0)),
  CHECK (voided = 1 OR burette_ml IS NOT NULL)
);
CREATE UNIQUE INDEX checkpoints_one_per_mark ON checkpoints (mark_id) WHERE replaces_id IS NULL;
CREATE UNIQUE INDEX checkpoints_replaced_once ON checkpoints (replaces_id) WHERE replaces_id IS NOT NULL;

-- What the sync must push, in device order (seq is the device's sequence number).
CREATE TABLE outbox (
  seq INTEGER PRIMARY KEY AUTOINCREMENT,
  entity TEXT NOT NULL CHECK (entity IN ('run', 'run_event', 'mark', 'reading', 'checkpoint')),
  record_id TEXT NOT NULL,
  op TEXT NOT NULL CHECK (op IN ('insert', 'update')),
  payload_json TEXT NOT NULL,
  created_wall_ms INTEGER NOT NULL,
  state TEXT NOT NULL DEFAULT 'pending' CHECK (state IN ('pending', 'sent', 'acked', 'rejected')),
  attempts INTEGER NOT NULL DEFAULT 0,
  last_error TEXT
);
CREATE INDEX outbox_pending ON outbox (state, seq);
`,
  },
  {
    version: 2,
    // The lab's calibrations overview as last fetched (src/local/calibrationsCache.ts), so run setup works offline.
    sql: `
CREATE TABLE calibrations_cache (
  lab_id TEXT PRIMARY KEY NOT NULL,
  overview_json TEXT NOT NULL,
  fetched_wall_ms INTEGER NOT NULL
);
`,
  },
  {
    version: 3,
    // One statement per recorded row: an INSERT into one of these views runs its trigger, which stores the row and
    // appends its outbox entry. A single statement is atomic on its own, so a recording needs no BEGIN…COMMIT and
    // one round trip to the database worker instead of eight. The outbox payload is passed in as the JSON text the
    // app made (JSON.stringify of the row), not rebuilt here: SQLite's json_object prints a REAL with 15
    // significant digits, which would change a tap's time_s in the payload.
    // A mark, reading or checkpoint must belong to a run (and a value to a mark) on this device: foreign keys are
    // not enforced by this database, so the triggers check.
    sql: `
CREATE VIEW record_mark AS
  SELECT id, run_id, kind, time_s, mono_ms, wall_ms, NULL AS payload_json, NULL AS queued_wall_ms FROM marks WHERE 0;
CREATE TRIGGER record_mark_insert INSTEAD OF INSERT ON record_mark BEGIN
  SELECT RAISE(ABORT, 'the run is not on this device') WHERE NOT EXISTS (SELECT 1 FROM runs WHERE id = NEW.run_id);
  INSERT INTO marks (id, run_id, kind, time_s, mono_ms, wall_ms) VALUES (NEW.id, NEW.run_id, NEW.kind, NEW.time_s, NEW.mono_ms, NEW.wall_ms);
  INSERT INTO outbox (entity, record_id, op, payload_json, created_wall_ms) VALUES ('mark', NEW.id, 'insert', NEW.payload_json, NEW.queued_wall_ms);
END;

CREATE VIEW record_reading AS
  SELECT id, run_id, mark_id, time_s, ph, mv, ph_source, replaces_id, reason, voided, wall_ms, NULL AS payload_json, NULL AS queued_wall_ms
  FROM readings WHERE 0;
CREATE TRIGGER record_reading_insert INSTEAD OF INSERT ON record_reading BEGIN
  SELECT RAISE(ABORT, 'the mark of this value is not on this device') WHERE NOT EXISTS (SELECT 1 FROM marks WHERE id = NEW.mark_id AND run_id = NEW.run_id);
  INSERT INTO readings (id, run_id, mark_id, time_s, ph, mv, ph_source, replaces_id, reason, voided, wall_ms)
    VALUES (NEW.id, NEW.run_id, NEW.mark_id, NEW.time_s, NEW.ph, NEW.mv, NEW.ph_source, NEW.replaces_id, NEW.reason, NEW.voided, NEW.wall_ms);
  INSERT INTO outbox (entity, record_id, op, payload_json, created_wall_ms) VALUES ('reading', NEW.id, 'insert', NEW.payload_json, NEW.queued_wall_ms);
END;

CREATE VIEW record_checkpoint AS
  SELECT id, run_id, mark_id, time_s, burette_ml, replaces_id, reason, voided, wall_ms, NULL AS payload_json, NULL AS queued_wall_ms
  FROM checkpoints WHERE 0;
CREATE TRIGGER record_checkpoint_insert INSTEAD OF INSERT ON record_checkpoint BEGIN
  SELECT RAISE(ABORT, 'the mark of this value is not on this device') WHERE NOT EXISTS (SELECT 1 FROM marks WHERE id = NEW.mark_id AND run_id = NEW.run_id);
  INSERT INTO checkpoints (id, run_id, mark_id, time_s, burette_ml, replaces_id, reason, voided, wall_ms)
    VALUES (NEW.id, NEW.run_id, NEW.mark_id, NEW.time_s, NEW.burette_ml, NEW.replaces_id, NEW.reason, NEW.voided, NEW.wall_ms);
  INSERT INTO outbox (entity, record_id, op, payload_json, created_wall_ms) VALUES ('checkpoint', NEW.id, 'insert', NEW.payload_json, NEW.queued_wall_ms);
END;

-- A clock event also moves the run's status (status_after not null): the run row and its outbox update in the same
-- statement.
CREATE VIEW record_run_event AS
  SELECT id, run_id, kind, mono_ms, wall_ms, data_json, NULL AS payload_json, NULL AS queued_wall_ms, NULL AS status_after, NULL AS status_payload_json
  FROM run_events WHERE 0;
CREATE TRIGGER record_run_event_insert INSTEAD OF INSERT ON record_run_event BEGIN
  SELECT RAISE(ABORT, 'the run is not on this device') WHERE NOT EXISTS (SELECT 1 FROM runs WHERE id = NEW.run_id);
  INSERT INTO run_events (id, run_id, kind, mono_ms, wall_ms, data_json) VALUES (NEW.id, NEW.run_id, NEW.kind, NEW.mono_ms, NEW.wall_ms, NEW.data_json);
  INSERT INTO outbox (entity, record_id, op, payload_json, created_wall_ms) VALUES ('run_event', NEW.id, 'insert', NEW.payload_json, NEW.queued_wall_ms);
  UPDATE runs SET status = NEW.status_after, updated_wall_ms = NEW.wall_ms, local_version = local_version + 1
    WHERE id = NEW.run_id AND NEW.status_after IS NOT NULL;
  INSERT INTO outbox (entity, record_id, op, payload_json, created_wall_ms)
    SELECT 'run', NEW.run_id, 'update', NEW.status_payload_json, NEW.queued_wall_ms WHERE NEW.status_after IS NOT NULL;
END;
`,
  },
];

/**
 * Settings of the connection, set before anything else touches the file (a WAL database cannot be read without
 * them on this VFS, which has no shared memory).
 * - locking_mode EXCLUSIVE: one connection of one tab owns the file anyway (the owner lock, and the OPFS access
 *   handles are exclusive); it lets WAL keep its index in memory.
 * - journal_mode WAL: a commit appends the changed pages to one file, instead of writing a rollback journal,
 *   syncing it, writing the database, syncing it and deleting the journal (about a quarter of the time measured).
 * - synchronous FULL: the WAL is flushed at every commit, before the write's promise resolves, so a row the screen
 *   shows as saved survives a tab kill, a browser crash and a power cut, as it did with the rollback journal.
 */
export const CONNECTION_SETUP = 'PRAGMA locking_mode = EXCLUSIVE; PRAGMA journal_mode = WAL; PRAGMA synchronous = FULL;';

/** Minimal surface of an expo-sqlite database the migrator needs (kept narrow so it is easy to fake). */
export interface MigratableDb {
  execAsync(sql: string): Promise<void>;
  getFirstAsync<T>(sql: string): Promise<T | null>;
}

export async function migrate(db: MigratableDb, migrations: Migration[] = MIGRATIONS): Promise<number> {
  await db.execAsync(CONNECTION_SETUP);
  const row = await db.getFirstAsync<{ user_version: number }>('PRAGMA user_version');
  let current = row?.user_version ?? 0;
  const latest = migrations[migrations.length - 1]?.version ?? 0;
  if (current > latest) {
    throw new Error(`This device's local database is version ${current}, newer than this app (${latest}). Reload to get the new app.`);
  }
  for (const m of migrations) {
    if (m.version <= current) continue;
    // PRAGMA user_version inside the transaction: a failed step leaves the version (and the schema) as they were.
    try {
      await db.execAsync(`BEGIN;\n${m.sql}\nPRAGMA user_version = ${m.version};\nCOMMIT;`);
    } catch (e) {
      await db.execAsync('ROLLBACK').catch(() => undefined);
      throw e;
    }
    current = m.version;
  }
  return current;
}
