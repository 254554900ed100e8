import { eq, sql } from 'drizzle-orm';
import { users } from '../../db/schema';
import type { Executor } from './executor';

export type UserRow = typeof users.$inferSelect;

export async function findByEmail(db: Executor, email: string): Promise<UserRow | undefined> {
  const [row] = await db.select().from(users).where(sql`lower(${users.email}) = lower(${email})`);
  return row;
}

export async function findById(db: Executor, id: string): Promise<UserRow | undefined> {
  const [row] = await db.select().from(users).where(eq(users.id, id));
  return row;
}

export async function insert(db: Executor, values: { email: string; displayName: string; passwordHash: string }) {
  const [row] = await db.insert(users).values(values).returning();
  return row;
}

export async function setPassword(db: Executor, id: string, passwordHash: string) {
  await db.update(users).set({ passwordHash }).where(eq(users.id, id));
}

export async function setDisabled(db: Executor, id: string, disabledAt: Date | null) {
  const [row] = await db.update(users).set({ disabledAt }).where(eq(users.id, id)).returning();
  return row;
}
