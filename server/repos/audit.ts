import { and, desc, eq, lt } from 'drizzle-orm';
import { auditLog, users } from '../../db/schema';
import type { Executor } from './executor';

export type AuditInsert = typeof auditLog.$inferInsert;

export async function insert(db: Executor, values: AuditInsert) {
  await db.insert(auditLog).values(values);
}

export async function page(db: Executor, labId: string, opts: { before?: Date; limit: number }) {
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
    .where(and(eq(auditLog.labId, labId), opts.before ? lt(auditLog.at, opts.before) : undefined))
    .orderBy(desc(auditLog.at), desc(auditLog.id))
    .limit(opts.limit);
}
