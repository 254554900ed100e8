import { and, asc, desc, eq, ilike, or, sql, type SQL } from 'drizzle-orm';
import { auditLog, checkpoints, labs, memberships, readings, runEvents, runs, users } from '../../db/schema';
import { runComments, runReviewEvents, runRevisions } from '../../db/schema/desk';
import { runClockFlags } from '../../db/schema/sync';
import type { RunListQuery } from '../../shared/schemas/desk';
import type { Executor } from './executor';

/** Reading rows of the desk: the runs table, the run's records, comments, the review trail. Plain rows out. */

function escapeLike(s: string): string {
  return s.replace(/[\\%_]/g, (c) => `\\${c}`);
}

function filters(labId: string, q: RunListQuery): SQL {
  const where: (SQL | undefined)[] = [eq(runs.labId, labId)];
  if (q.analystId) where.push(eq(runs.analystId, q.analystId));
  if (q.status) where.push(eq(runs.status, q.status));
  if (q.sample) where.push(ilike(runs.sampleName, `%${escapeLike(q.sample)}%`));
  if (q.from) where.push(sql`${runs.createdAt} >= ${`${q.from}T00:00:00Z`}::timestamptz`);
  if (q.to) where.push(sql`${runs.createdAt} < (${`${q.to}T00:00:00Z`}::timestamptz + interval '1 day')`);
  if (q.titrantLot) where.push(eq(runs.titrantLot, q.titrantLot));
  if (q.q) {
    const like = `%${escapeLike(q.q)}%`;
    where.push(or(ilike(runs.sampleName, like), ilike(runs.notes, like), ilike(users.displayName, like)));
  }
  return and(...where)!;
}

// The headline numbers are stored generated columns of runs (db/schema/core.ts): sorting by them reads no jsonb.
const SORTS = {
  date: runs.createdAt,
  sample: sql`lower(${runs.sampleName})`,
  analyst: sql`lower(${users.displayName})`,
  status: runs.status,
  ve: runs.equivalenceVolumeMl,
  pka: runs.pKa,
} as const;

export interface RunListRow {
  id: string;
  sampleName: string;
  analystId: string;
  analystName: string;
  status: string;
  createdAt: Date;
  updatedAt: Date;
  equivalenceVolumeMl: number | null;
  pKa: number | null;
  molarMassGPerMol: number | null;
  concentrationM: number | null;
  titrantLot: string | null;
  isDemo: boolean;
  readingCount: number;
  lastReceivedAt: Date | null;
  /** Runs matching the filters on every page (a window count). */
  total: number;
}

const asDate = (v: unknown) => (v instanceof Date ? v : new Date(v as string));

/**
 * One page of the lab's runs, the total matching count (a window count) and each row's readings count and last
 * receipt, in one statement: one round trip, one snapshot.
 */
export async function listRuns(db: Executor, labId: string, q: RunListQuery): Promise<RunListRow[]> {
  const key = SORTS[q.sort];
  // Runs without a result sort last either way, so "lowest Ve first" does not open on a page of blanks.
  const order = sql`${key} ${q.dir === 'asc' ? sql`asc` : sql`desc`} nulls last, ${runs.createdAt} desc, ${runs.id} asc`;
  const res = await db.execute(sql`
    select p.*, coalesce(s.reading_count, 0)::int as reading_count, s.last_received_at
    from (
      select ${runs.id} as id, ${runs.sampleName} as sample_name, ${runs.analystId} as analyst_id,
        ${users.displayName} as analyst_name, ${runs.status} as status, ${runs.createdAt} as created_at,
        ${runs.updatedAt} as updated_at, ${runs.equivalenceVolumeMl} as equivalence_volume_ml, ${runs.pKa} as pka,
        ${runs.molarMassGPerMol} as molar_mass_g_per_mol, ${runs.concentrationM} as concentration_m,
        ${runs.titrantLot} as titrant_lot, ${runs.isDemo} as is_demo,
        count(*) over () as total, row_number() over (order by ${order}) as position
      from ${runs} join ${users} on ${users.id} = ${runs.analystId}
      where ${filters(labId, q)}
      order by ${order}
      limit ${q.pageSize} offset ${(q.page - 1) * q.pageSize}
    ) p
    left join lateral (
      select count(*) filter (where r.kind = 'reading') as reading_count, max(r.received_at) as last_received_at
      from ${readings} r where r.run_id = p.id
    ) s on true
    order by p.position`);
  return rowsOf<Record<string, unknown>>(res).map((r) => ({
    id: r.id as string,
    sampleName: r.sample_name as string,
    analystId: r.analyst_id as string,
    analystName: r.analyst_name as string,
    status: r.status as string,
    createdAt: asDate(r.created_at),
    updatedAt: asDate(r.updated_at),
    equivalenceVolumeMl: r.equivalence_volume_ml as number | null,
    pKa: r.pka as number | null,
    molarMassGPerMol: r.molar_mass_g_per_mol as number | null,
    concentrationM: r.concentration_m as number | null,
    titrantLot: r.titrant_lot as string | null,
    isDemo: r.is_demo as boolean,
    readingCount: Number(r.reading_count),
    lastReceivedAt: r.last_received_at == null ? null : asDate(r.last_received_at),
    total: Number(r.total),
  }));
}

/** Runs matching the filters (for a page past the end, which has no row to carry the window count). */
export async function countRuns(db: Executor, labId: string, q: RunListQuery): Promise<number> {
  const [row] = await db
    .select({ n: sql<number>`count(*)`.mapWith(Number) })
    .from(runs)
    .innerJoin(users, eq(users.id, runs.analystId))
    .where(filters(labId, q));
  return row?.n ?? 0;
}

/** Analysts and titrant lots that appear in the lab's runs (the filter pickers), in one statement. */
export async function facets(db: Executor, labId: string) {
  const res = await db.execute(sql`
    select
      (select coalesce(json_agg(json_build_object('id', u.id, 'name', u.display_name) order by u.display_name, u.id), '[]')
         from ${users} u where u.id in (select distinct r.analyst_id from ${runs} r where r.lab_id = ${labId})) as analysts,
      (select coalesce(json_agg(l.lot), '[]')
         from (select distinct r.titrant_lot as lot from ${runs} r where r.lab_id = ${labId} and r.titrant_lot is not null) l) as lots`);
  const [row] = rowsOf<{ analysts: unknown; lots: unknown }>(res);
  const parse = <T>(v: unknown): T => (typeof v === 'string' ? JSON.parse(v) : v) as T;
  return { analysts: parse<{ id: string; name: string }[]>(row.analysts), titrantLots: parse<string[]>(row.lots).sort() };
}

/** node-postgres and PGlite both answer `execute` with {rows}. */
function rowsOf<T>(res: unknown): T[] {
  return ((res as { rows?: T[] }).rows ?? (res as T[])) as T[];
}

export async function runWithAnalyst(db: Executor, runId: string) {
  const rows = await db
    .select({ run: runs, analystName: users.displayName, analystEmail: users.email })
    .from(runs)
    .innerJoin(users, eq(users.id, runs.analystId))
    .where(eq(runs.id, runId))
    .limit(1);
  return rows[0];
}

/** Devices whose clock was found far off while they synced this run (largest offset each). */
export async function clockFlagsOf(db: Executor, runId: string) {
  return db
    .select({ deviceId: runClockFlags.deviceId, offsetMs: runClockFlags.offsetMs, flaggedAt: runClockFlags.flaggedAt })
    .from(runClockFlags)
    .where(eq(runClockFlags.runId, runId))
    .orderBy(asc(runClockFlags.flaggedAt));
}

export async function lockRunRow(tx: Executor, runId: string) {
  const rows = await tx.select().from(runs).where(eq(runs.id, runId)).for('update').limit(1);
  return rows[0];
}

export async function setStatus(tx: Executor, runId: string, status: string, at: Date) {
  const [row] = await tx
    .update(runs)
    .set({ status, version: sql`${runs.version} + 1`, updatedAt: at })
    .where(eq(runs.id, runId))
    .returning();
  return row;
}

export const readingsOf = (db: Executor, runId: string) =>
  db.select().from(readings).where(eq(readings.runId, runId)).orderBy(asc(readings.timeS), asc(readings.receivedAt));
export const checkpointsOf = (db: Executor, runId: string) =>
  db.select().from(checkpoints).where(eq(checkpoints.runId, runId)).orderBy(asc(checkpoints.timeS));
export const eventsOf = (db: Executor, runId: string) =>
  db.select().from(runEvents).where(eq(runEvents.runId, runId)).orderBy(asc(runEvents.timeS));

export const commentsOf = (db: Executor, runId: string) =>
  db
    .select({ id: runComments.id, authorId: runComments.authorId, authorName: users.displayName, body: runComments.body, createdAt: runComments.createdAt })
    .from(runComments)
    .innerJoin(users, eq(users.id, runComments.authorId))
    .where(eq(runComments.runId, runId))
    .orderBy(asc(runComments.createdAt));

export async function insertComment(tx: Executor, v: typeof runComments.$inferInsert) {
  const [row] = await tx.insert(runComments).values(v).returning();
  return row;
}

export const reviewOf = (db: Executor, runId: string) =>
  db
    .select({
      id: runReviewEvents.id,
      kind: runReviewEvents.kind,
      revision: runReviewEvents.revision,
      actorId: runReviewEvents.actorId,
      actorName: users.displayName,
      comment: runReviewEvents.comment,
      meaning: runReviewEvents.meaning,
      at: runReviewEvents.at,
    })
    .from(runReviewEvents)
    .innerJoin(users, eq(users.id, runReviewEvents.actorId))
    .where(eq(runReviewEvents.runId, runId))
    .orderBy(asc(runReviewEvents.at));

export async function insertReviewEvent(tx: Executor, v: typeof runReviewEvents.$inferInsert) {
  await tx.insert(runReviewEvents).values(v);
}

/** The run's current revision (the highest); none stored yet means revision 1, open. */
export async function currentRevision(db: Executor, runId: string) {
  const rows = await db
    .select({ rev: runRevisions, approvedByName: users.displayName })
    .from(runRevisions)
    .leftJoin(users, eq(users.id, runRevisions.approvedBy))
    .where(eq(runRevisions.runId, runId))
    .orderBy(desc(runRevisions.revision))
    .limit(1);
  return rows[0] ?? null;
}

export async function insertRevision(tx: Executor, v: typeof runRevisions.$inferInsert) {
  await tx.insert(runRevisions).values(v);
}

export async function lockRevision(
  tx: Executor,
  runId: string,
  revision: number,
  v: { lockedAt: Date; approvedBy: string; approvalMeaning: string; snapshot: unknown },
) {
  await tx
    .update(runRevisions)
    .set(v)
    .where(and(eq(runRevisions.runId, runId), eq(runRevisions.revision, revision)));
}

export const auditOfRun = (db: Executor, runId: string) =>
  db
    .select({ at: auditLog.at, actorName: users.displayName, action: auditLog.action, after: auditLog.after })
    .from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.actorId))
    .where(and(eq(auditLog.entity, 'run'), eq(auditLog.entityId, runId)))
    .orderBy(asc(auditLog.at));

/** Managers of a lab (e-mail on submission). */
export async function managersOf(db: Executor, labId: string) {
  return db
    .select({ id: users.id, email: users.email, displayName: users.displayName })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.labId, labId), eq(memberships.role, 'manager'), sql`${users.disabledAt} is null`));
}

export async function labSettings(db: Executor, labId: string): Promise<Record<string, unknown> | null> {
  const [row] = await db.select({ settings: labs.settings }).from(labs).where(eq(labs.id, labId));
  return (row?.settings as Record<string, unknown>) ?? null;
}
