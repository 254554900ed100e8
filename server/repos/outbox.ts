import { and, desc, eq, inArray, lte, sql } from 'drizzle-orm';
import { capturedMail, outbox } from '../../db/schema';
import type { Executor } from './executor';

export type OutboxRow = typeof outbox.$inferSelect;

export async function enqueue(db: Executor, msg: { to: string; subject: string; text: string; html?: string }) {
  const [row] = await db
    .insert(outbox)
    .values({ toAddress: msg.to, subject: msg.subject, textBody: msg.text, htmlBody: msg.html })
    .returning({ id: outbox.id });
  return row;
}

/**
 * Takes up to `limit` due messages and pushes their next attempt past the lease, so a worker that dies mid-send
 * leaves them to be retried rather than lost; SKIP LOCKED keeps two workers from taking the same row.
 */
export async function claimDue(db: Executor, now: Date, leaseUntil: Date, limit: number): Promise<OutboxRow[]> {
  const due = db
    .select({ id: outbox.id })
    .from(outbox)
    .where(and(eq(outbox.status, 'pending'), lte(outbox.nextAttemptAt, now)))
    .orderBy(outbox.createdAt)
    .limit(limit)
    .for('update', { skipLocked: true });
  return db
    .update(outbox)
    .set({ nextAttemptAt: leaseUntil, attempts: sql`${outbox.attempts} + 1` })
    .where(inArray(outbox.id, due))
    .returning();
}

export async function markSent(db: Executor, id: string, now: Date) {
  await db.update(outbox).set({ status: 'sent', sentAt: now, lastError: null }).where(eq(outbox.id, id));
}

export async function markFailed(db: Executor, id: string, error: string, retryAt: Date | null) {
  await db
    .update(outbox)
    .set(retryAt ? { lastError: error, nextAttemptAt: retryAt } : { lastError: error, status: 'failed' })
    .where(eq(outbox.id, id));
}

export async function insertCaptured(
  db: Executor,
  values: { fromAddress: string | null; toAddresses: string[]; subject: string | null; textBody: string | null; raw: string },
) {
  await db.insert(capturedMail).values(values);
}

export async function listCaptured(db: Executor, limit = 100) {
  return db.select().from(capturedMail).orderBy(desc(capturedMail.receivedAt)).limit(limit);
}
