import { and, asc, eq, gt, isNull, sql } from 'drizzle-orm';
import { invitations, labs, memberships, users } from '../../db/schema';
import type { Role } from '../../shared/schemas/roles';
import type { Executor } from './executor';

export async function findLab(db: Executor, labId: string) {
  const [row] = await db.select().from(labs).where(eq(labs.id, labId));
  return row;
}

/** The caller's labs and roles; loaded on every authenticated request so a role change applies at once. */
export async function membershipsOf(db: Executor, userId: string) {
  return db
    .select({ labId: memberships.labId, role: memberships.role, labName: labs.name, isDemo: labs.isDemo })
    .from(memberships)
    .innerJoin(labs, eq(labs.id, memberships.labId))
    .where(eq(memberships.userId, userId))
    .orderBy(asc(labs.name));
}

export async function membership(db: Executor, labId: string, userId: string) {
  const [row] = await db
    .select()
    .from(memberships)
    .where(and(eq(memberships.labId, labId), eq(memberships.userId, userId)));
  return row;
}

export async function members(db: Executor, labId: string) {
  return db
    .select({
      userId: users.id,
      email: users.email,
      displayName: users.displayName,
      role: memberships.role,
      disabledAt: users.disabledAt,
      joinedAt: memberships.createdAt,
    })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.labId, labId))
    .orderBy(asc(users.displayName));
}

export async function insertMembership(db: Executor, labId: string, userId: string, role: Role) {
  const [row] = await db.insert(memberships).values({ labId, userId, role }).returning();
  return row;
}

export async function setRole(db: Executor, labId: string, userId: string, role: Role) {
  await db
    .update(memberships)
    .set({ role })
    .where(and(eq(memberships.labId, labId), eq(memberships.userId, userId)));
}

/** Managers of the lab whose accounts are not disabled. */
export async function activeManagerCount(db: Executor, labId: string): Promise<number> {
  const [row] = await db
    .select({ n: sql<number>`count(*)::int` })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.labId, labId), eq(memberships.role, 'manager'), isNull(users.disabledAt)));
  return row.n;
}

export type InvitationRow = typeof invitations.$inferSelect;

export async function insertInvitation(
  db: Executor,
  values: { labId: string; email: string; role: Role; tokenHash: string; invitedBy: string; expiresAt: Date },
) {
  const [row] = await db.insert(invitations).values(values).returning();
  return row;
}

export async function invitationByHash(db: Executor, tokenHash: string) {
  const [row] = await db
    .select({ invitation: invitations, labName: labs.name, invitedByName: users.displayName })
    .from(invitations)
    .innerJoin(labs, eq(labs.id, invitations.labId))
    .leftJoin(users, eq(users.id, invitations.invitedBy))
    .where(eq(invitations.tokenHash, tokenHash));
  return row;
}

export async function invitationById(db: Executor, labId: string, id: string) {
  const [row] = await db
    .select()
    .from(invitations)
    .where(and(eq(invitations.id, id), eq(invitations.labId, labId)));
  return row;
}

export async function pendingInvitations(db: Executor, labId: string, now: Date) {
  return db
    .select({
      id: invitations.id,
      email: invitations.email,
      role: invitations.role,
      invitedBy: users.displayName,
      createdAt: invitations.createdAt,
      expiresAt: invitations.expiresAt,
    })
    .from(invitations)
    .leftJoin(users, eq(users.id, invitations.invitedBy))
    .where(
      and(
        eq(invitations.labId, labId),
        isNull(invitations.acceptedAt),
        isNull(invitations.revokedAt),
        gt(invitations.expiresAt, now),
      ),
    )
    .orderBy(asc(invitations.createdAt));
}

/** Marks an open invitation used; returns false when it was already used or withdrawn (single use under races). */
export async function consumeInvitation(db: Executor, id: string, userId: string, now: Date): Promise<boolean> {
  const rows = await db
    .update(invitations)
    .set({ acceptedAt: now, acceptedBy: userId })
    .where(and(eq(invitations.id, id), isNull(invitations.acceptedAt), isNull(invitations.revokedAt)))
    .returning({ id: invitations.id });
  return rows.length === 1;
}

/** Withdraws open invitations: one by id, or all for an address in a lab (a new invitation replaces old ones). */
export async function revokeInvitations(db: Executor, labId: string, by: { id: string } | { email: string }, now: Date) {
  return db
    .update(invitations)
    .set({ revokedAt: now })
    .where(
      and(
        eq(invitations.labId, labId),
        isNull(invitations.acceptedAt),
        isNull(invitations.revokedAt),
        'id' in by ? eq(invitations.id, by.id) : sql`lower(${invitations.email}) = lower(${by.email})`,
      ),
    )
    .returning();
}
