import { and, asc, desc, eq, ilike, inArray, or, sql, type SQL } from 'drizzle-orm';
import { auditLog, checkpoints, labs, memberships, readings, runEvents, runs, users } from '../../db/schema';
import { runComments, runReviewEvents, runRevisions, runSummaries } from '../../db/schema/desk';
import type { RunListQuery } from '../../shared/schemas/desk';
import type { Executor } from './executor';

/** Reading rows of the desk: the runs table, the run's records, comments, the review trail. Plain rows out. */

// The run's headline numbers live in the stored analysis (runs.result); the titrant lot in the setup the bench wrote.
const ve = sql<number | null>`(${runs.result}#>>'{equivalencePoints,0,volumeMl}')::float8`;
const pKa = sql<number | null>`(${runs.result}#>>'{pKa,0}')::float8`;
const molarMass = sql<number | null>`(${runs.result}->>'molarMassGPerMol')::float8`;
const concentration = sql<number | null>`(${runs.result}->>'analyteConcentrationM')::float8`;
export const titrantLotExpr = sql<string | null>`coalesce(${runs.setup}#>>'{titrant,lotLabel}', ${runs.setup}#>>'{titrant,lotId}')`;

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
  if (q.titrantLot) where.push(eq(runSummaries.titrantLot, q.titrantLot));
  if (q.q) {
    const like = `%${escapeLike(q.q)}%`;
    where.push(or(ilike(runs.sampleName, like), ilike(runs.notes, like), ilike(users.displayName, like)));
  }
  return and(...where)!;
}

const SORTS = {
  date: runs.createdAt,
  sample: sql`lower(${runs.sampleName})`,
  analyst: sql`lower(${users.displayName})`,
  status: runs.status,
  ve: runSummaries.equivalenceVolumeMl,
  pka: runSummaries.pKa,
} as const;

const fingerprint = sql`${runs.updatedAt}::text || ':' || coalesce(pg_column_size(${runs.result}), 0) || ':' || pg_column_size(${runs.setup})`;

/**
 * Brings the lab's run summaries up to date: only runs whose fingerprint changed are read out of their jsonb, so a
 * list of 1,000 unchanged runs costs one join on primary keys.
 */
export async function refreshSummaries(db: Executor, labId: string) {
  await db.execute(sql`
    insert into ${runSummaries} (run_id, lab_id, equivalence_volume_ml, pka, molar_mass_g_per_mol, concentration_m, titrant_lot, fingerprint)
    select ${runs.id}, ${runs.labId}, ${ve}, ${pKa}, ${molarMass}, ${concentration}, ${titrantLotExpr}, ${fingerprint}
    from ${runs} left join ${runSummaries} on ${runSummaries.runId} = ${runs.id}
    where ${runs.labId} = ${labId} and (${runSummaries.runId} is null or ${runSummaries.fingerprint} <> ${fingerprint})
    on conflict (run_id) do update set
      equivalence_volume_ml = excluded.equivalence_volume_ml, pka = excluded.pka,
      molar_mass_g_per_mol = excluded.molar_mass_g_per_mol, concentration_m = excluded.concentration_m,
      titrant_lot = excluded.titrant_lot, fingerprint = excluded.fingerprint`);
}

/** One page of the lab's runs with the total matching count (a window count: one query, one pass). */
export async function listRuns(db: Executor, labId: string, q: RunListQuery) {
  const key = SORTS[q.sort];
  // Runs without a result sort last either way, so "lowest Ve first" does not open on a page of blanks.
  const order = sql`${key} ${q.dir === 'asc' ? sql`asc` : sql`desc`} nulls last`;
  return db
    .select({
      id: runs.id,
      sampleName: runs.sampleName,
      analystId: runs.analystId,
      analystName: users.displayName,
      status: runs.status,
      createdAt: runs.createdAt,
      updatedAt: runs.updatedAt,
      equivalenceVolumeMl: runSummaries.equivalenceVolumeMl,
      pKa: runSummaries.pKa,
      molarMassGPerMol: runSummaries.molarMassGPerMol,
      concentrationM: runSummaries.concentrationM,
      titrantLot: runSummaries.titrantLot,
      isDemo: runs.isDemo,
      total: sql<number>`count(*) over ()`.mapWith(Number),
    })
    .from(runs)
    .innerJoin(users, eq(users.id, runs.analystId))
    .innerJoin(runSummaries, eq(runSummaries.runId, runs.id))
    .where(filters(labId, q))
    .orderBy(order, desc(runs.createdAt), asc(runs.id))
    .limit(q.pageSize)
    .offset((q.page - 1) * q.pageSize);
}

/** Readings count and last receipt per run, for the rows of one page. */
export async function readingStats(db: Executor, runIds: string[]) {
  if (!runIds.length) return [];
  return db
    .select({
      runId: readings.runId,
      count: sql<number>`count(*) filter (where ${readings.kind} = 'reading')`.mapWith(Number),
      last: sql<Date | null>`max(${readings.receivedAt})`.mapWith((v) => (v ? new Date(v as string) : null)),
    })
    .from(readings)
    .where(inArray(readings.runId, runIds))
    .groupBy(readings.runId);
}

export async function facets(db: Executor, labId: string) {
  const analysts = await db
    .selectDistinct({ id: users.id, name: users.displayName })
    .from(runs)
    .innerJoin(users, eq(users.id, runs.analystId))
    .where(eq(runs.labId, labId))
    .orderBy(users.displayName);
  const lots = await db
    .selectDistinct({ lot: runSummaries.titrantLot })
    .from(runSummaries)
    .where(and(eq(runSummaries.labId, labId), sql`${runSummaries.titrantLot} is not null`));
  return { analysts, titrantLots: lots.map((l) => l.lot!).sort() };
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

/** Of these runs, those whose current (highest) revision is approved and locked: sync refuses changes to them. */
export async function lockedRunIds(db: Executor, runIds: string[]): Promise<Set<string>> {
  if (!runIds.length) return new Set();
  const rows = await db
    .selectDistinctOn([runRevisions.runId], { runId: runRevisions.runId, lockedAt: runRevisions.lockedAt })
    .from(runRevisions)
    .where(inArray(runRevisions.runId, runIds))
    .orderBy(runRevisions.runId, desc(runRevisions.revision));
  return new Set(rows.filter((r) => r.lockedAt).map((r) => r.runId));
}
