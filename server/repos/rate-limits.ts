import { eq, inArray, sql } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { rateLimits } from '../../db/schema';

export async function lockedUntil(db: Db, keys: string[]) {
  if (keys.length === 0) return [];
  return db.select({ key: rateLimits.key, lockedUntil: rateLimits.lockedUntil }).from(rateLimits).where(inArray(rateLimits.key, keys));
}

/** Adds one failure (restarting the count when the last one is older than the window); returns the new count. */
export async function countFailure(db: Db, key: string, now: Date, windowStart: Date): Promise<number> {
  const [row] = await db
    .insert(rateLimits)
    .values({ key, failures: 1, lastFailureAt: now })
    .onConflictDoUpdate({
      target: rateLimits.key,
      set: {
        failures: sql`case when ${rateLimits.lastFailureAt} < ${windowStart.toISOString()}::timestamptz then 1 else ${rateLimits.failures} + 1 end`,
        lastFailureAt: now,
      },
    })
    .returning({ failures: rateLimits.failures });
  return row.failures;
}

export async function setLockedUntil(db: Db, key: string, until: Date) {
  await db.update(rateLimits).set({ lockedUntil: until }).where(eq(rateLimits.key, key));
}

export async function clear(db: Db, keys: string[]) {
  if (keys.length) await db.delete(rateLimits).where(inArray(rateLimits.key, keys));
}
