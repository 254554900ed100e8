import { bigint, bigserial, doublePrecision, index, integer, pgTable, primaryKey, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import { labs, runs, users } from './core';

/**
 * A device that pushes changes, per signed-in user (a shared phone is one device id with several users).
 * `lastSeq` is the highest device sequence number accepted, committed in the same transaction as the batch.
 */
export const devices = pgTable(
  'devices',
  {
    id: uuid('id').notNull(),
    userId: uuid('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    /** The lab of the last run this device pushed to (a user may belong to several). */
    labId: uuid('lab_id').references(() => labs.id, { onDelete: 'set null' }),
    lastSeq: bigint('last_seq', { mode: 'number' }).notNull().default(0),
    /** Device clock minus server clock at the last sync, ms (includes one-way network latency). */
    clockOffsetMs: doublePrecision('clock_offset_ms'),
    lastSyncAt: timestamp('last_sync_at', { withTimezone: true }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.id, t.userId] })],
);

/**
 * The change log pulls read: one row per stored record or edit, `seq` a server-wide increasing cursor. Writers take
 * the sync advisory lock before inserting here (server/repos/sync.ts), so rows become visible in `seq` order and a
 * pull never skips a row committed late under a lower number.
 */
export const syncChanges = pgTable(
  'sync_changes',
  {
    seq: bigserial('seq', { mode: 'number' }).primaryKey(),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    /** run | reading | checkpoint | run_event | run_meta_edit (and, later, calibration | titrant) */
    entity: text('entity').notNull(),
    recordId: uuid('record_id').notNull(),
    runId: uuid('run_id'),
    at: timestamp('at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('sync_changes_lab_seq_idx').on(t.labId, t.seq), index('sync_changes_run_seq_idx').on(t.runId, t.seq)],
);

/**
 * Every edit of a run's editable metadata as sent, applied or not: a conflicting edit is kept here beside the value
 * that won, so no edit is lost. The id is the device's change id (idempotency key).
 */
export const runMetaHistory = pgTable(
  'run_meta_history',
  {
    id: uuid('id').primaryKey(),
    runId: uuid('run_id')
      .notNull()
      .references(() => runs.id, { onDelete: 'cascade' }),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    userId: uuid('user_id')
      .notNull()
      .references(() => users.id),
    deviceId: uuid('device_id').notNull(),
    /** notes | sampleName | status */
    field: text('field').notNull(),
    value: text('value').notNull(),
    /** The run's value of the field when this edit arrived. */
    previousValue: text('previous_value'),
    baseVersion: integer('base_version'),
    /** The run version after this edit was handled (unchanged when it lost a conflict). */
    resultVersion: integer('result_version').notNull(),
    /** applied | conflict (kept here; the value already on the server stayed) */
    outcome: text('outcome').notNull(),
    deviceRecordedAt: timestamp('device_recorded_at', { withTimezone: true }),
    receivedAt: timestamp('received_at', { withTimezone: true }).notNull().defaultNow(),
    payloadHash: text('payload_hash').notNull(),
  },
  (t) => [index('run_meta_history_run_idx').on(t.runId, t.field, t.resultVersion)],
);

/** "Submit for review", as sent from the bench. */
export const runSubmissions = pgTable(
  'run_submissions',
  {
    id: uuid('id').primaryKey(),
    runId: uuid('run_id')
      .notNull()
      .references(() => runs.id, { onDelete: 'cascade' }),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    userId: uuid('user_id')
      .notNull()
      .references(() => users.id),
    note: text('note').notNull().default(''),
    deviceRecordedAt: timestamp('device_recorded_at', { withTimezone: true }),
    receivedAt: timestamp('received_at', { withTimezone: true }).notNull().defaultNow(),
    payloadHash: text('payload_hash').notNull(),
  },
  (t) => [index('run_submissions_run_idx').on(t.runId)],
);

/** A run recorded on a device whose clock was far off: shown on the run so nobody trusts its wall-clock times. */
export const runClockFlags = pgTable(
  'run_clock_flags',
  {
    runId: uuid('run_id')
      .notNull()
      .references(() => runs.id, { onDelete: 'cascade' }),
    deviceId: uuid('device_id').notNull(),
    /** Largest |offset| seen, signed (device minus server), ms. */
    offsetMs: doublePrecision('offset_ms').notNull(),
    flaggedAt: timestamp('flagged_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.runId, t.deviceId] })],
);
