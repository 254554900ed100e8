import { and, asc, eq, gt, inArray, sql, type SQL } from 'drizzle-orm';
import { checkpoints, devices, readings, runClockFlags, runEvents, runMetaHistory, runRevisions, runSubmissions, runs, syncChanges } from '../../db/schema';
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

/**
 * The start of every push, in one statement: the sync lock, then the device row for this user (created on first
 * push), locked for the rest of the transaction (an upsert locks the row it meets like SELECT … FOR UPDATE).
 */
export async function lockDevice(tx: Executor, id: string, userId: string): Promise<{ lastSeq: number }> {
  const res = await tx.execute<{ last_seq: string | number }>(sql`
    with sync_lock as (select pg_advisory_xact_lock(${SYNC_LOCK}))
    insert into ${devices} (id, user_id) select ${id}, ${userId} from sync_lock
    on conflict (id, user_id) do update set user_id = excluded.user_id
    returning last_seq`);
  const [row] = rowsOf<{ last_seq: string | number }>(res);
  return { lastSeq: Number(row.last_seq) };
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

/** The runs a push names: their lab and analyst, and whether their current revision is approved and locked. */
export async function runsForPush(tx: Executor, ids: string[]) {
  if (!ids.length) return [];
  const res = await tx.execute<{ id: string; lab_id: string; analyst_id: string; locked: boolean }>(sql`
    select r.id, r.lab_id, r.analyst_id,
      coalesce((select v.locked_at is not null from ${runRevisions} v where v.run_id = r.id order by v.revision desc limit 1), false) as locked
    from ${runs} r where r.id = any(${`{${ids.join(',')}}`}::uuid[])`);
  return rowsOf<{ id: string; lab_id: string; analyst_id: string; locked: boolean }>(res).map((r) => ({ id: r.id, labId: r.lab_id, analystId: r.analyst_id, locked: r.locked }));
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

export interface Inserted {
  /** Whether this id of the rows given was new (the rest were already stored and are untouched). */
  has(id: string): boolean;
  /** Highest change-log position taken (readings carry theirs), null when none. */
  maxSeq: number | null;
}

/** Inserts with ON CONFLICT DO NOTHING; returns the ids that were new. Existing rows are never touched. */
export async function insertIgnoringExisting(
  tx: Executor,
  table: RowTable,
  rows: (RunInsert | ReadingInsert | CheckpointInsert | RunEventInsert)[],
): Promise<Inserted> {
  if (table === 'reading') return insertReadingsIgnoringExisting(tx, rows as ReadingInsert[]);
  const inserted = new Set<string>();
  if (!rows.length) return { has: () => false, maxSeq: null };
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
  return { has: (id) => inserted.has(id), maxSeq: null };
}

const NEEDS_ESCAPE = /["\\]/;

/** One element of a Postgres array literal: text quoted (so any text is safe), numbers as they are, NULL. */
function element(v: string | number | null | undefined): string {
  if (v === null || v === undefined) return 'NULL';
  if (typeof v === 'number') return String(v);
  return `"${NEEDS_ESCAPE.test(v) ? v.replace(/["\\]/g, (c) => `\\${c}`) : v}"`;
}

type Cell = string | number | null;

/** The readings columns a push writes. */
export type ReadingField = 'id' | 'run_id' | 'lab_id' | 'kind' | 'time_s' | 'ph' | 'mv' | 'replaces_id' | 'reason' | 'device_recorded_at' | 'received_at' | 'payload_hash';
/**
 * The readings to insert, column by column: a column is one value for every row, or row i's value. Times are epoch
 * milliseconds (see fromEpochMs).
 */
export type ReadingCells = Record<ReadingField, Cell | ((i: number) => Cell)>;

// Times go as epoch milliseconds (an integer per row) and become timestamptz in the database, whole seconds and the
// milliseconds apart: to_timestamp computes in floating point, exact for whole seconds over the whole span of device
// times (0 … year 9999) but not for seconds with a fraction that far out (readings-insert.test.ts checks both
// databases to the millisecond). An ISO string per row cost more to format than the rest of its column.
const fromEpochMs = (v: SQL) => sql`(to_timestamp(${v} / 1000) + (${v} % 1000) * interval '1 millisecond')`;
const epochMs = (d: unknown): number | null => (d instanceof Date ? d.getTime() : null);

/** Each column: name, the Postgres type sent, and how the sent value becomes the column's (an SQL expression of `v`). */
const READING_COLUMNS: [name: ReadingField, type: string, into?: (v: SQL) => SQL][] = [
  ['id', 'uuid'],
  ['run_id', 'uuid'],
  ['lab_id', 'uuid'],
  ['kind', 'text'],
  ['time_s', 'float8'],
  ['ph', 'float8'],
  ['mv', 'float8'],
  ['replaces_id', 'uuid'],
  ['reason', 'text'],
  ['device_recorded_at', 'int8', fromEpochMs],
  ['received_at', 'int8', fromEpochMs],
  ['payload_hash', 'text'],
];

/** Rows as columns (each read per row; the insert finds the ones that are the same on every row). */
function cellsOfRows(rows: ReadingInsert[], now: number): ReadingCells {
  return {
    id: (i) => rows[i].id!,
    run_id: (i) => rows[i].runId,
    lab_id: (i) => rows[i].labId,
    kind: (i) => rows[i].kind ?? 'reading',
    time_s: (i) => rows[i].timeS,
    ph: (i) => rows[i].pH ?? null,
    mv: (i) => rows[i].mV ?? null,
    replaces_id: (i) => rows[i].replacesId ?? null,
    reason: (i) => rows[i].reason ?? null,
    device_recorded_at: (i) => epochMs(rows[i].deviceRecordedAt),
    received_at: (i) => epochMs(rows[i].receivedAt) ?? now,
    payload_hash: (i) => rows[i].payloadHash ?? null,
  };
}

/** See insertReadingCells. */
export async function insertReadingsIgnoringExisting(tx: Executor, rows: ReadingInsert[]): Promise<Inserted> {
  return insertReadingCells(tx, rows.length, cellsOfRows(rows, Date.now()));
}

/**
 * Readings, the bulk of every push, in one statement over unnest(): one parameter per column instead of one per
 * value, which PGlite and PostgreSQL bind and plan several times faster than a many-row VALUES list. A column whose
 * value is the same on every row (the run, the lab, the receipt time of one push) goes as one value, not an array.
 * Each new reading takes its change-log position (readings.seq) from the change log's sequence, under the sync lock
 * like every writer of the log, so pulls meet it in order without a sync_changes row of its own. The positions are
 * reserved as one block (one setval instead of a nextval per row) and handed out by row order; a row that was
 * already stored leaves its place unused, a gap pulls step over like any other.
 */
export async function insertReadingCells(tx: Executor, n: number, cells: ReadingCells): Promise<Inserted> {
  if (!n) return { has: () => false, maxSeq: null };
  const reserved = await tx.execute<{ last: string | number }>(sql`
    with sync_lock as (select pg_advisory_xact_lock(${SYNC_LOCK}))
    select setval('sync_changes_seq_seq', nextval('sync_changes_seq_seq') + ${n - 1}) as last from sync_lock`);
  const last = Number(rowsOf<{ last: string | number }>(reserved)[0].last);
  const first = last - n + 1;
  const arrays: SQL[] = [];
  const names: string[] = [];
  const selected: SQL[] = [];
  let ids = '';
  for (const [name, type, into] of READING_COLUMNS) {
    const cell = cells[name];
    const get = typeof cell === 'function' ? cell : () => cell;
    const head = get(0);
    // Most columns of a push are the same on every row (run, lab, kind, receipt time…): given as one value, or found
    // so first, before any array literal is written, at one comparison per row and no text. The ids always go as an
    // array (its literal finds the new rows when some were taken).
    let one = name !== 'id';
    if (one && typeof cell === 'function') for (let i = 1; one && i < n; i++) one = get(i) === head;
    if (one) {
      const value = sql`${head}::${sql.raw(type)}`;
      selected.push(into ? into(value) : value);
    } else {
      // Joined once (a string built by += is a chain of pieces to walk and collect).
      const parts = new Array<string>(n);
      for (let i = 0; i < n; i++) parts[i] = element(get(i));
      const literal = `{${parts.join(',')}}`;
      if (name === 'id') ids = literal;
      arrays.push(sql`${literal}::${sql.raw(type)}[]`);
      names.push(name);
      const value = sql.raw(`u.${name}`);
      selected.push(into ? into(value) : value);
    }
  }
  const columns = sql.raw(READING_COLUMNS.map(([name]) => name).join(', '));
  // No RETURNING: the command's row count says whether every row went in (a push's usual case); 10,000 returned
  // rows cost more to send and read than the check below, which runs only when some id was already taken.
  const res = await tx.execute(sql`
    insert into ${readings} (${columns}, seq)
    select ${sql.join(selected, sql`, `)}, ${first - 1}::int8 + u.place
    from unnest(${sql.join(arrays, sql`, `)}) with ordinality as u(${sql.raw(names.join(', '))}, place)
    on conflict do nothing`);
  const wrote = affectedOf(res);
  // All went in (a push's usual case): no set of thousands of ids to build and look up.
  if (wrote === n) return { has: () => true, maxSeq: last };
  if (!wrote) return { has: () => false, maxSeq: null };
  // Some ids were taken: the new rows are those holding a place of this block (rows stored before hold an older
  // place, or none).
  const fresh = rowsOf<{ id: string; seq: string | number }>(
    await tx.execute(sql`select id, seq from ${readings} where id = any(${ids}::uuid[]) and seq between ${first} and ${last}`),
  );
  const freshIds = new Set(fresh.map((r) => r.id));
  return { has: (id) => freshIds.has(id), maxSeq: fresh.reduce((m, r) => Math.max(m, Number(r.seq)), first) };
}

/** Rows an INSERT wrote: PGlite reports affectedRows, node-postgres rowCount. */
function affectedOf(res: unknown): number {
  const r = res as { affectedRows?: number; rowCount?: number | null };
  const n = r.affectedRows ?? r.rowCount;
  if (typeof n !== 'number') throw new Error('The database driver did not say how many rows the insert wrote.');
  return n;
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

/**
 * The change log after `cursor`, oldest first: the rows of sync_changes merged with the readings, which carry their
 * own position (readings.seq). Each side is cut at `limit` before the merge, so the merge's first `limit` are right.
 */
export async function changesSince(db: Executor, opts: { labIds: readonly string[]; cursor: number; limit: number; runId?: string }) {
  if (!opts.labIds.length) return [];
  const labs = `{${opts.labIds.join(',')}}`;
  const res = await db.execute<{ seq: string | number; entity: string; record_id: string }>(sql`
    select seq, entity, record_id from (
      (select c.seq, c.entity, c.record_id from ${syncChanges} c
        where c.lab_id = any(${labs}::uuid[]) and c.seq > ${opts.cursor} ${opts.runId ? sql`and c.run_id = ${opts.runId}` : sql``}
        order by c.seq limit ${opts.limit})
      union all
      (select r.seq, 'reading', r.id from ${readings} r
        where r.lab_id = any(${labs}::uuid[]) and r.seq > ${opts.cursor} ${opts.runId ? sql`and r.run_id = ${opts.runId}` : sql``}
        order by r.seq limit ${opts.limit})
    ) log
    order by seq limit ${opts.limit}`);
  return rowsOf<{ seq: string | number; entity: string; record_id: string }>(res).map((r) => ({ seq: Number(r.seq), entity: r.entity, recordId: r.record_id }));
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
