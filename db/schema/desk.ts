import { bigint, index, integer, jsonb, pgTable, text, timestamp, uniqueIndex, uuid } from 'drizzle-orm/pg-core';
import { labs, runs, users } from './core';

/** The team desk: comments on runs, attached files, and the review trail (submission, return, approval, revisions). */

export const runComments = pgTable(
  'run_comments',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    runId: uuid('run_id')
      .notNull()
      .references(() => runs.id, { onDelete: 'cascade' }),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    authorId: uuid('author_id')
      .notNull()
      .references(() => users.id),
    body: text('body').notNull(),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('run_comments_run_idx').on(t.runId, t.createdAt)],
);

/**
 * A stored file on a run or on a calibration (e.g. a certificate of a primary standard). `storageKey` is made by the
 * server; the uploaded name is kept only to offer it back in Content-Disposition.
 */
export const attachments = pgTable(
  'attachments',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    runId: uuid('run_id').references(() => runs.id, { onDelete: 'cascade' }),
    /** Calibration records live in another area's table; kept as a plain id so either can evolve. */
    calibrationId: uuid('calibration_id'),
    storageKey: text('storage_key').notNull(),
    originalName: text('original_name').notNull(),
    /** Detected from the content (magic bytes), never taken from the client. */
    mimeType: text('mime_type').notNull(),
    sizeBytes: bigint('size_bytes', { mode: 'number' }).notNull(),
    sha256: text('sha256').notNull(),
    uploadedBy: uuid('uploaded_by')
      .notNull()
      .references(() => users.id),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('attachments_run_idx').on(t.runId), index('attachments_calibration_idx').on(t.calibrationId)],
);

/**
 * Revisions of a run. Revision 1 opens with the run; approval locks the revision (lockedAt) with a snapshot of what
 * was approved. A change after approval needs a new revision, opened with a reason.
 */
export const runRevisions = pgTable(
  'run_revisions',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    runId: uuid('run_id')
      .notNull()
      .references(() => runs.id, { onDelete: 'cascade' }),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    revision: integer('revision').notNull(),
    openedBy: uuid('opened_by').references(() => users.id),
    reason: text('reason'),
    openedAt: timestamp('opened_at', { withTimezone: true }).notNull().defaultNow(),
    lockedAt: timestamp('locked_at', { withTimezone: true }),
    approvedBy: uuid('approved_by').references(() => users.id),
    /** What the signature means, as shown to the approver (e.g. "Reviewed and approved as the lab's result"). */
    approvalMeaning: text('approval_meaning'),
    /** The run as approved: setup, result, notes, sample name, reading count and a hash of the readings. */
    snapshot: jsonb('snapshot'),
  },
  (t) => [uniqueIndex('run_revisions_run_rev_idx').on(t.runId, t.revision)],
);

/** Every review step: submit, return (with a comment), approve (with the signature's meaning), reopen. */
export const runReviewEvents = pgTable(
  'run_review_events',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    runId: uuid('run_id')
      .notNull()
      .references(() => runs.id, { onDelete: 'cascade' }),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    revision: integer('revision').notNull(),
    kind: text('kind').notNull(),
    actorId: uuid('actor_id')
      .notNull()
      .references(() => users.id),
    comment: text('comment'),
    meaning: text('meaning'),
    at: timestamp('at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('run_review_events_run_idx').on(t.runId, t.at)],
);
