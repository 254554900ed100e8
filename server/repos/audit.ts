import { and, desc, eq, sql } from 'drizzle-orm';
import { auditLog, users } from '../../db/schema';
import type { Executor } from './executor';

export type AuditInsert = typeof auditLog.$inferInsert;

export async function insert(db: Executor, values: AuditInsert) {
  await db.insert(auditLog).values(values);
}

/**
 * One page, newest first, ordered by (at, id). The cursor is the id of the last entry already shown; the next page
 * starts strictly below that entry's (at, id) pair, read in the database at full timestamp precision. Many entries
 * share a time (everything written in one transaction gets its start time), so a cursor by time alone would skip or
 * repeat them.
 */
export async function page(db: Executor, labId: string, opts: { afterId?: string; limit: number }) {
  return db
    .select({
      id: auditLog.id,
      at: auditLog.at,
      actorId: auditLog.actorId,
      actorName: users.displayName,
      action: auditLog.action,
      entity: auditLog.entity,
      entityId: auditLog.entityId,
      before: auditLog.before,
      after: auditLog.after,
    })
    .from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.actorId))
    .where(
      and(
        eq(auditLog.labId, labId),
        opts.afterId
          ? sql`(${auditLog.at}, ${auditLog.id}) < (select c.at, c.id from audit_log c where c.id = ${opts.afterId} and c.lab_id = ${labId})`
          : undefined,
      ),
    )
    .orderBy(desc(auditLog.at), desc(auditLog.id))
    .limit(opts.limit);
}
