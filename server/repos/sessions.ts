import { and, eq, isNull, sql } from 'drizzle-orm';
import { labs, memberships, passwordResets, refreshTokens, sessions, users } from '../../db/schema';
import type { Role } from '../../shared/schemas/roles';
import type { Executor } from './executor';

export async function createSession(db: Executor, values: { userId: string; expiresAt: Date; userAgent?: string | null }) {
  const [row] = await db.insert(sessions).values(values).returning();
  return row;
}

export async function insertRefreshToken(db: Executor, values: { sessionId: string; tokenHash: string; expiresAt: Date }) {
  await db.insert(refreshTokens).values(values);
}

export async function refreshTokenByHash(db: Executor, tokenHash: string) {
  const [row] = await db
    .select({ token: refreshTokens, session: sessions })
    .from(refreshTokens)
    .innerJoin(sessions, eq(sessions.id, refreshTokens.sessionId))
    .where(eq(refreshTokens.tokenHash, tokenHash));
  return row;
}

/** Marks a refresh token used; false when it already was (the second of two racing uses is a reuse). */
export async function useRefreshToken(db: Executor, id: string, now: Date): Promise<boolean> {
  const rows = await db
    .update(refreshTokens)
    .set({ usedAt: now })
    .where(and(eq(refreshTokens.id, id), isNull(refreshTokens.usedAt)))
    .returning({ id: refreshTokens.id });
  return rows.length === 1;
}

export async function touchSession(db: Executor, id: string, now: Date) {
  await db.update(sessions).set({ lastUsedAt: now }).where(eq(sessions.id, id));
}

export async function revokeSession(db: Executor, id: string, reason: string, now: Date) {
  await db
    .update(sessions)
    .set({ revokedAt: now, revokedReason: reason })
    .where(and(eq(sessions.id, id), isNull(sessions.revokedAt)));
}

export async function revokeUserSessions(db: Executor, userId: string, reason: string, now: Date) {
  await db
    .update(sessions)
    .set({ revokedAt: now, revokedReason: reason })
    .where(and(eq(sessions.userId, userId), isNull(sessions.revokedAt)));
}

/**
 * Session and user state checked on every authenticated request, with the user's labs and roles (by lab name):
 * one statement, so each request pays one round trip for its access check.
 */
export async function sessionState(db: Executor, sessionId: string, userId: string) {
  const [row] = await db
    .select({
      revokedAt: sessions.revokedAt,
      expiresAt: sessions.expiresAt,
      disabledAt: users.disabledAt,
      email: users.email,
      displayName: users.displayName,
      labs: sql<unknown>`coalesce((
        select json_agg(json_build_object('labId', m.lab_id, 'role', m.role, 'labName', l.name, 'isDemo', l.is_demo) order by l.name)
        from ${memberships} m join ${labs} l on l.id = m.lab_id
        where m.user_id = ${users.id}), '[]'::json)`,
    })
    .from(sessions)
    .innerJoin(users, eq(users.id, sessions.userId))
    .where(and(eq(sessions.id, sessionId), eq(sessions.userId, userId)));
  if (!row) return undefined;
  const list = (typeof row.labs === 'string' ? JSON.parse(row.labs) : row.labs) as { labId: string; role: Role; labName: string; isDemo: boolean }[];
  // Frozen: the access check caches this and hands it to every request of the session.
  return Object.freeze({ ...row, labs: Object.freeze(list.map((l) => Object.freeze(l))) });
}

export async function insertPasswordReset(db: Executor, values: { userId: string; tokenHash: string; expiresAt: Date }) {
  await db.insert(passwordResets).values(values);
}

export async function passwordResetByHash(db: Executor, tokenHash: string) {
  const [row] = await db.select().from(passwordResets).where(eq(passwordResets.tokenHash, tokenHash));
  return row;
}

export async function consumePasswordReset(db: Executor, id: string, now: Date): Promise<boolean> {
  const rows = await db
    .update(passwordResets)
    .set({ usedAt: now })
    .where(and(eq(passwordResets.id, id), isNull(passwordResets.usedAt)))
    .returning({ id: passwordResets.id });
  return rows.length === 1;
}

/** A new reset link makes the older unused ones useless. */
export async function expireOpenResets(db: Executor, userId: string, now: Date) {
  await db
    .update(passwordResets)
    .set({ usedAt: now })
    .where(and(eq(passwordResets.userId, userId), isNull(passwordResets.usedAt)));
}
