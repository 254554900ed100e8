import { v7 } from 'uuid';
import type { Database } from '../../db/client';
import { labs, memberships, users } from '../../db/schema';
import type { Role } from '../../shared/schemas/roles';
import type { Change, EntityKind } from '../../shared/schemas/sync';
import type { SyncCaller, SyncDeps } from './sync';

/** Test helpers for sync: labs and members without password hashing, callers as the route layer builds them. */
export async function syncWorld(database: Database) {
  const [labA] = await database.db.insert(labs).values({ name: 'Sync lab A (test)' }).returning();
  const [labB] = await database.db.insert(labs).values({ name: 'Sync lab B (test)' }).returning();
  let n = 0;
  async function member(labId: string | null, role: Role): Promise<SyncCaller & { id: string }> {
    n++;
    const [u] = await database.db.insert(users).values({ email: `sync-${role}-${n}-${v7()}@example.org`, displayName: `Sync ${role} ${n}` }).returning();
    if (labId) await database.db.insert(memberships).values({ labId, userId: u.id, role });
    const roles = new Map(labId ? [[labId, role]] : []);
    return { id: u.id, userId: u.id, labs: labId ? [{ labId }] : [], roleIn: (l) => roles.get(l) };
  }
  let nowMs = Date.now();
  const deps: SyncDeps = { database, now: () => new Date(nowMs) };
  return { labA, labB, member, deps, advance: (ms: number) => void (nowMs += ms), nowMs: () => nowMs };
}

/** A device making changes with increasing sequence numbers. */
export function fakeDevice(id = v7()) {
  let seq = 0;
  return {
    id,
    change(kind: EntityKind, payload: unknown, opts: { id?: string; recordedAt?: number } = {}): Change {
      return { id: opts.id ?? v7(), kind, seq: ++seq, recordedAt: opts.recordedAt ?? Date.now(), payload };
    },
    batch(changes: Change[], sentAt = Date.now()) {
      return { deviceId: id, sentAt, changes };
    },
  };
}
