import { and, asc, eq, gt, inArray, sql } from 'drizzle-orm';
import { checkpoints, devices, readings, runClockFlags, runEvents, runMetaHistory, runSubmissions, runs, syncChanges } from '../../db/schema';
import type { Executor } from './executor';

/**
 * Every writer of `sync_changes` holds this transaction-scoped advisory lock from before it takes a `seq` until it
 * commits, so change rows become visible in `seq` order and a pull cursor never jumps over a row committed late.
 * The number is arbitrary but fixed ("HM" + 6).
 */
const SYNC_LOCK = 0x484d0006;

export async function lockSync(tx: Executor): Promise<void> {
  await tx.execute(sql`select pg_advisory_xact_lock(${SYNC_LOCK})`);
}

export type DeviceRow = typeof devices.$inferSelect;

/** The device row for this user, created on first push, locked for the rest of the transaction. */
export async function lockDevice(tx: Executor, id: string, userId: string): Promise<DeviceRow> {
  await tx.insert(devices).values({ id, userId }).onConflictDoNothing();
  const [row] = await tx
    .select()
    .from(devices)
    .where(and(eq(devices.id, id), eq(devices.userId, userId)))
    .for('update');
  return row;
}

export async function updateDevice(
  tx: Executor,
  id: string,
  userId: string,
  patch: { lastSeq: number; clockOffsetMs: number; lastSyncAt: Date; labId?: string | null },
): Promise<void> {
  await tx
    .update(devices)
    .set({ ...patch, lastSeq: sql`greatest(${devices.lastSeq}, ${patch.lastSeq})` })
    .where(and(eq(devices.id, id), eq(devices.userId, userId)));
}

export async function runsByIds(tx: Executor, ids: string[]) {
  if (!ids.length) return [];
  return tx
    .select({ id: runs.id, labId: runs.labId, analystId: runs.analystId, payloadHash: runs.payloadHash })
    .from(runs)
    .where(inArray(runs.id, ids));
}

export async function lockRun(tx: Executor, id: string) {
  const [row] = await tx.select().from(runs).where(eq(runs.id, id)).for('update');
  return row;
}

export type RunInsert = typeof runs.$inferInsert;
export type ReadingInsert = typeof readings.$inferInsert;
export type CheckpointInsert = typeof checkpoints.$inferInsert;
export type RunEventInsert = typeof runEvents.$inferInsert;

const TABLES = { run: runs, reading: readings, checkpoint: checkpoints, run_event: runEvents } as const;
export type RowTable = keyof typeof TABLES;

/** Postgres allows 65,535 bind parameters per statement; stay well below with chunks. */
const PARAMS_PER_STATEMENT = 30_000;

/** Inserts with ON CONFLICT DO NOTHING; returns the ids that were new. Existing rows are never touched. */
export async function insertIgnoringExisting(
  tx: Executor,
  table: RowTable,
  rows: (RunInsert | ReadingInsert | CheckpointInsert | RunEventInsert)[],
): Promise<Set<string>> {
  if (table === 'reading') return insertReadingsIgnoringExisting(tx, rows as ReadingInsert[]);
  const inserted = new Set<string>();
  if (!rows.length) return inserted;
  const t = TABLES[table];
  const perRow = Object.keys(rows[0]).length || 1;
  const chunk = Math.max(1, Math.floor(PARAMS_PER_STATEMENT / perRow));
  for (let i = 0; i < rows.length; i += chunk) {
    const out = (await tx
      .insert(t)
      .values(rows.slice(i, i + chunk) as never)
      .onConflictDoNothing()
      .returning({ id: t.id })) as { id: string }[];
    for (const r of out) inserted.add(r.id);
  }
  return inserted;
}

/** A Postgres array literal of text values (quoted, so any text is safe), or NULL elements for null/undefined. */
function arrayLiteral(values: (string | number | null | undefined)[]): string {
  return `{${values.map((v) => (v === null || v === undefined ? 'NULL' : `"${String(v).replace(/["\\]/g, (c) => `\\${c}`)}"`)).join(',')}}`;
}

/**
 * Readings, the bulk of every push, in one statement over unnest(): one parameter per column instead of one per
 * value, which PGlite and PostgreSQL bind and plan several times faster than a many-row VALUES list.
 */
export async function insertReadingsIgnoringExisting(tx: Executor, rows: ReadingInsert[]): Promise<Set<string>> {
  if (!rows.length) return new Set();
  const col = <K extends keyof ReadingInsert>(k: K, f: (v: ReadingInsert[K]) => string | number | null = (v) => v as never) =>
    arrayLiteral(rows.map((r) => f(r[k])));
  const iso = (d: unknown) => (d instanceof Date ? d.toISOString() : null);
  const res = await tx.execute<{ id: string }>(sql`
    insert into ${readings} (id, run_id, lab_id, kind, time_s, ph, mv, replaces_id, reason, device_recorded_at, received_at, payload_hash)
    select * from unnest(
      ${col('id')}::uuid[], ${col('runId')}::uuid[], ${col('labId')}::uuid[], ${col('kind', (v) => v ?? 'reading')}::text[],
      ${col('timeS')}::float8[], ${col('pH')}::float8[], ${col('mV')}::float8[], ${col('replacesId')}::uuid[], ${col('reason')}::text[],
      ${col('deviceRecordedAt', iso)}::timestamptz[], ${col('receivedAt', (d) => iso(d) ?? new Date().toISOString())}::timestamptz[],
      ${col('payloadHash')}::text[]
    )
    on conflict do nothing
    returning id`);
  return new Set(rowsOf<{ id: string }>(res).map((r) => r.id));
}

/** Stored payload hashes of these ids in one table (for replays: "already have it" or a conflicting payload). */
export async function storedHashes(tx: Executor, table: RowTable | 'run_meta_edit' | 'submission', ids: string[]): Promise<Map<string, string | null>> {
  const out = new Map<string, string | null>();
  if (!ids.length) return out;
  const t = table === 'run_meta_edit' ? runMetaHistory : table === 'submission' ? runSubmissions : TABLES[table];
  const rows = (await tx
    .select({ id: t.id, hash: t.payloadHash })
    .from(t as never)
    .where(inArray(t.id, ids))) as { id: string; hash: string | null }[];
  for (const r of rows) out.set(r.id, r.hash);
  return out;
}

/** Targets of corrections: which of these ids exist in the table, with their run and time. */
export async function correctionTargets(tx: Executor, table: 'reading' | 'checkpoint', ids: string[]) {
  if (!ids.length) return new Map<string, { runId: string; timeS: number }>();
  const t = table === 'reading' ? readings : checkpoints;
  const rows = await tx.select({ id: t.id, runId: t.runId, timeS: t.timeS }).from(t).where(inArray(t.id, ids));
  return new Map(rows.map((r) => [r.id, { runId: r.runId, timeS: r.timeS }]));
}

export interface ChangeLogRow {
  labId: string;
  entity: string;
  recordId: string;
  runId: string | null;
}

/**
 * Appends to the change log (one statement) and returns the highest seq. Takes the sync lock itself (re-entrant in
 * one transaction), so other areas (calibrations, titrants) can call it from their own transactions.
 */
export async function logChanges(tx: Executor, rows: ChangeLogRow[]): Promise<number | null> {
  if (!rows.length) return null;
  await lockSync(tx);
  const res = await tx.execute<{ seq: string | number }>(sql`
    insert into ${syncChanges} (lab_id, entity, record_id, run_id)
    select * from unnest(
      ${`{${rows.map((r) => r.labId).join(',')}}`}::uuid[],
      ${`{${rows.map((r) => r.entity).join(',')}}`}::text[],
      ${`{${rows.map((r) => r.recordId).join(',')}}`}::uuid[],
      ${`{${rows.map((r) => r.runId ?? 'NULL').join(',')}}`}::uuid[]
    )
    returning seq`);
  const list = rowsOf<{ seq: string | number }>(res);
  return list.reduce((m, r) => Math.max(m, Number(r.seq)), 0);
}

/** node-postgres returns {rows}, PGlite returns {rows} as well, but keep the access in one place. */
function rowsOf<T>(res: unknown): T[] {
  return ((res as { rows?: T[] }).rows ?? (res as T[])) as T[];
}

/** Sends a notification delivered at commit (NOTIFY is transactional): the live hub fans it out. */
export async function notifyRuns(tx: Executor, channel: string, payloads: string[]): Promise<void> {
  if (!payloads.length) return;
  await tx.execute(sql`select pg_notify(${channel}, p) from unnest(${`{${payloads.map((p) => `"${p}"`).join(',')}}`}::text[]) as p`);
}

export async function insertMetaHistory(tx: Executor, row: typeof runMetaHistory.$inferInsert): Promise<boolean> {
  const out = await tx.insert(runMetaHistory).values(row).onConflictDoNothing().returning({ id: runMetaHistory.id });
  return out.length === 1;
}

export async function metaHistoryById(tx: Executor, id: string) {
  const [row] = await tx.select().from(runMetaHistory).where(eq(runMetaHistory.id, id));
  return row;
}

/** Applied edits of one field made after `version`: a device editing on top of `version` conflicts with these. */
export async function appliedSince(tx: Executor, runId: string, field: string, version: number) {
  return tx
    .select()
    .from(runMetaHistory)
    .where(
      and(
        eq(runMetaHistory.runId, runId),
        eq(runMetaHistory.field, field),
        eq(runMetaHistory.outcome, 'applied'),
        gt(runMetaHistory.resultVersion, version),
      ),
    )
    .orderBy(asc(runMetaHistory.resultVersion));
}

export async function setRunField(tx: Executor, runId: string, column: 'notes' | 'sampleName' | 'status', value: string, at: Date) {
  const [row] = await tx
    .update(runs)
    .set({ [column]: value, version: sql`${runs.version} + 1`, updatedAt: at })
    .where(eq(runs.id, runId))
    .returning({ version: runs.version });
  return row.version;
}

export async function insertSubmission(tx: Executor, row: typeof runSubmissions.$inferInsert): Promise<boolean> {
  const out = await tx.insert(runSubmissions).values(row).onConflictDoNothing().returning({ id: runSubmissions.id });
  return out.length === 1;
}

/** Keeps the largest offset seen per run and device. */
export async function flagRunClocks(tx: Executor, runIds: string[], deviceId: string, offsetMs: number, at: Date) {
  if (!runIds.length) return;
  await tx
    .insert(runClockFlags)
    .values(runIds.map((runId) => ({ runId, deviceId, offsetMs, flaggedAt: at })))
    .onConflictDoUpdate({
      target: [runClockFlags.runId, runClockFlags.deviceId],
      set: { offsetMs, flaggedAt: at },
      setWhere: sql`abs(${runClockFlags.offsetMs}) < abs(excluded.offset_ms)`,
    });
}

// ---------- pull ----------

export async function changesSince(db: Executor, opts: { labIds: string[]; cursor: number; limit: number; runId?: string }) {
  if (!opts.labIds.length) return [];
  return db
    .select({ seq: syncChanges.seq, entity: syncChanges.entity, recordId: syncChanges.recordId })
    .from(syncChanges)
    .where(
      and(
        inArray(syncChanges.labId, opts.labIds),
        gt(syncChanges.seq, opts.cursor),
        opts.runId ? eq(syncChanges.runId, opts.runId) : undefined,
      ),
    )
    .orderBy(asc(syncChanges.seq))
    .limit(opts.limit);
}

export async function runsWithFlags(db: Executor, ids: string[]) {
  if (!ids.length) return [];
  return db
    .select({
      run: runs,
      clockOffsetMs: sql<number | null>`(select f.offset_ms from ${runClockFlags} f where f.run_id = ${runs.id} order by abs(f.offset_ms) desc limit 1)`,
    })
    .from(runs)
    .where(inArray(runs.id, ids));
}

export async function readingsByIds(db: Executor, ids: string[]) {
  return ids.length ? db.select().from(readings).where(inArray(readings.id, ids)) : [];
}
export async function checkpointsByIds(db: Executor, ids: string[]) {
  return ids.length ? db.select().from(checkpoints).where(inArray(checkpoints.id, ids)) : [];
}
export async function runEventsByIds(db: Executor, ids: string[]) {
  return ids.length ? db.select().from(runEvents).where(inArray(runEvents.id, ids)) : [];
}
export async function metaEditsByIds(db: Executor, ids: string[]) {
  return ids.length ? db.select().from(runMetaHistory).where(inArray(runMetaHistory.id, ids)) : [];
}

export async function deviceRow(db: Executor, id: string, userId: string) {
  const [row] = await db.select().from(devices).where(and(eq(devices.id, id), eq(devices.userId, userId)));
  return row;
}
