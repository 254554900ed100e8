import { sql } from 'drizzle-orm';
import {
  bigint,
  boolean,
  doublePrecision,
  index,
  integer,
  jsonb,
  pgEnum,
  pgTable,
  primaryKey,
  text,
  timestamp,
  uniqueIndex,
  uuid,
} from 'drizzle-orm/pg-core';

/** Roles a member can hold in a lab. Kept in step with shared/schemas/roles.ts. */
export const roleEnum = pgEnum('lab_role', ['analyst', 'manager', 'viewer']);

export const labs = pgTable('labs', {
  id: uuid('id').primaryKey().defaultRandom(),
  name: text('name').notNull(),
  /** Demo labs are seeded with invented data and say so everywhere they are shown. */
  isDemo: boolean('is_demo').notNull().default(false),
  /** Lab policy: calibration ages, acceptance limits. Shape: shared/schemas/lab.ts labSettingsSchema. */
  settings: jsonb('settings').notNull().default(sql`'{}'::jsonb`),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
});

export const users = pgTable(
  'users',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    email: text('email').notNull(),
    displayName: text('display_name').notNull(),
    /** Encoded hash string (algorithm and parameters included); null until an invitation is accepted. */
    passwordHash: text('password_hash'),
    disabledAt: timestamp('disabled_at', { withTimezone: true }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('users_email_lower_idx').on(sql`lower(${t.email})`)],
);

export const memberships = pgTable(
  'memberships',
  {
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    userId: uuid('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    role: roleEnum('role').notNull(),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.labId, t.userId] }), index('memberships_user_idx').on(t.userId)],
);

/** A number inside a jsonb column (path as a Postgres text array), null when absent or not a number. */
function jsonNumber(column: 'result', path: string) {
  return sql.raw(`case when jsonb_typeof(${column} #> '{${path}}') = 'number' then (${column} #>> '{${path}}')::float8 end`);
}

/**
 * A titration run. The id is made on the device (it is the idempotency key for sync).
 * `setup` holds the run's plan as recorded (sample, titrant lot, calibrations chosen); `result` the last analysis.
 */
export const runs = pgTable(
  'runs',
  {
    id: uuid('id').primaryKey(),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    analystId: uuid('analyst_id')
      .notNull()
      .references(() => users.id),
    sampleName: text('sample_name').notNull(),
    status: text('status').notNull().default('recording'),
    setup: jsonb('setup').notNull().default(sql`'{}'::jsonb`),
    result: jsonb('result'),
    notes: text('notes').notNull().default(''),
    /** Server-assigned version of the editable metadata (notes, sample name, status). */
    version: integer('version').notNull().default(1),
    isDemo: boolean('is_demo').notNull().default(false),
    deviceCreatedAt: timestamp('device_created_at', { withTimezone: true }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
    payloadHash: text('payload_hash'),
    /*
     * The runs table's headline numbers, kept current by PostgreSQL from `result` and `setup` on every write (stored
     * generated columns), so the list filters, sorts and pages without reading any run's analysis. A value of the
     * wrong JSON type gives null, never a failed write.
     */
    equivalenceVolumeMl: doublePrecision('equivalence_volume_ml').generatedAlwaysAs(jsonNumber('result', 'equivalencePoints,0,volumeMl')),
    pKa: doublePrecision('pka').generatedAlwaysAs(jsonNumber('result', 'pKa,0')),
    molarMassGPerMol: doublePrecision('molar_mass_g_per_mol').generatedAlwaysAs(jsonNumber('result', 'molarMassGPerMol')),
    concentrationM: doublePrecision('concentration_m').generatedAlwaysAs(jsonNumber('result', 'analyteConcentrationM')),
    // Cut to 200 characters (what the lot filter accepts): a long label sent from a device must never make the row
    // too big for its index and fail the write.
    titrantLot: text('titrant_lot').generatedAlwaysAs(sql`left(coalesce(setup #>> '{titrant,lotLabel}', setup #>> '{titrant,lotId}'), 200)`),
  },
  (t) => [
    index('runs_lab_created_idx').on(t.labId, t.createdAt),
    index('runs_lab_status_idx').on(t.labId, t.status),
    index('runs_lab_ve_idx').on(t.labId, t.equivalenceVolumeMl),
    index('runs_lab_pka_idx').on(t.labId, t.pKa),
    index('runs_lab_lot_idx').on(t.labId, t.titrantLot),
  ],
);

/**
 * One tapped reading. Immutable once stored: a correction is a new row whose `replacesId` names the reading it
 * corrects (kind 'correction') or withdraws (kind 'deletion'), with a reason.
 */
export const readings = pgTable(
  'readings',
  {
    id: uuid('id').primaryKey(),
    runId: uuid('run_id')
      .notNull()
      .references(() => runs.id, { onDelete: 'cascade' }),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    kind: text('kind').notNull().default('reading'),
    /** Seconds of run time (monotonic clock, pauses excluded) at the moment of the tap. */
    timeS: doublePrecision('time_s').notNull(),
    pH: doublePrecision('ph'),
    mV: doublePrecision('mv'),
    replacesId: uuid('replaces_id'),
    reason: text('reason'),
    deviceRecordedAt: timestamp('device_recorded_at', { withTimezone: true }),
    receivedAt: timestamp('received_at', { withTimezone: true }).notNull().defaultNow(),
    payloadHash: text('payload_hash'),
    /**
     * The reading's place in the change log pulls read (taken from sync_changes' sequence under the sync lock, see
     * server/repos/sync.ts): a reading is logged by this column, not by a row of its own in sync_changes, which
     * halves what storing a pushed reading costs. Null: never offered to pulls (demo data seeded on the server).
     */
    seq: bigint('seq', { mode: 'number' }),
  },
  (t) => [index('readings_run_time_idx').on(t.runId, t.timeS), index('readings_lab_seq_idx').on(t.labId, t.seq).where(sql`${t.seq} is not null`)],
);

/** A burette reading noted during the run; the first one is the start reading. */
export const checkpoints = pgTable(
  'checkpoints',
  {
    id: uuid('id').primaryKey(),
    runId: uuid('run_id')
      .notNull()
      .references(() => runs.id, { onDelete: 'cascade' }),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    timeS: doublePrecision('time_s').notNull(),
    /** Null only on a withdrawal (a row with replacesId that takes the checkpoint back). */
    buretteMl: doublePrecision('burette_ml'),
    replacesId: uuid('replaces_id'),
    reason: text('reason'),
    deviceRecordedAt: timestamp('device_recorded_at', { withTimezone: true }),
    receivedAt: timestamp('received_at', { withTimezone: true }).notNull().defaultNow(),
    payloadHash: text('payload_hash'),
  },
  (t) => [index('checkpoints_run_idx').on(t.runId, t.timeS)],
);

/** Clock events of a run: start, pause (refill), resume, finish. */
export const runEvents = pgTable(
  'run_events',
  {
    id: uuid('id').primaryKey(),
    runId: uuid('run_id')
      .notNull()
      .references(() => runs.id, { onDelete: 'cascade' }),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    kind: text('kind').notNull(),
    timeS: doublePrecision('time_s').notNull(),
    detail: jsonb('detail'),
    deviceRecordedAt: timestamp('device_recorded_at', { withTimezone: true }),
    receivedAt: timestamp('received_at', { withTimezone: true }).notNull().defaultNow(),
    payloadHash: text('payload_hash'),
  },
  (t) => [index('run_events_run_idx').on(t.runId, t.timeS)],
);

/** Append-only record of every change to lab data. The API offers no way to edit or delete it. */
export const auditLog = pgTable(
  'audit_log',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    labId: uuid('lab_id').references(() => labs.id, { onDelete: 'cascade' }),
    actorId: uuid('actor_id').references(() => users.id),
    action: text('action').notNull(),
    entity: text('entity').notNull(),
    entityId: text('entity_id'),
    before: jsonb('before'),
    after: jsonb('after'),
    at: timestamp('at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('audit_lab_at_idx').on(t.labId, t.at)],
);
