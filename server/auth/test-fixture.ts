import request from 'supertest';
import type { Database } from '../../db/client';
import { labs, memberships, users } from '../../db/schema';
import type { Role } from '../../shared/schemas/roles';
import { createApp } from '../app';
import { createServerContext, type ServerContext } from './context';
import { hashPassword, SCRYPT_PARAMS } from './password';
import { newOpaqueToken } from './tokens';
import * as labsRepo from '../repos/labs';
import * as sessionsRepo from '../repos/sessions';
import { testDatabase } from '../testing/db';

/** Fixed secret for tests only (RFC 8725 asks for ≥ 256-bit keys for HS256; this is 44 characters). */
export const TEST_JWT_SECRET = 'test-only-secret-not-for-any-deployment-0001';
export const TEST_PASSWORD = 'correct horse battery staple';
export const TEST_PUBLIC_URL = 'http://halfmark.test';

export interface Person {
  id: string;
  email: string;
  displayName: string;
}

/**
 * Two labs (A and B) with a manager, an analyst and a viewer in A and a manager in B, all with TEST_PASSWORD
 * (hashed once, at a low cost: see below). The clock can be moved forward; tokens can be minted without
 * signing in (each sign-in would cost a hash).
 */
export async function authFixture() {
  const database: Database = await testDatabase();
  let nowMs = Date.now();
  const now = () => new Date(nowMs);
  const nudges = { count: 0 };
  const deps = {
    database,
    log: () => {},
    auth: { jwtSecret: TEST_JWT_SECRET, publicUrl: TEST_PUBLIC_URL, now },
    mail: { nudge: () => void nudges.count++ },
  };
  const app = createApp(deps);
  const ctx: ServerContext = createServerContext(deps);
  // Fixture accounts are hashed at a low cost so each sign-in in a test is fast; verification takes the cost from
  // the stored hash. Passwords set through the API (reset, invitation) use the full SCRYPT_PARAMS.
  const passwordHash = await hashPassword(TEST_PASSWORD, { ...SCRYPT_PARAMS, N: 2 ** 10 });

  const [labA] = await database.db.insert(labs).values({ name: 'Lab A (test)' }).returning();
  const [labB] = await database.db.insert(labs).values({ name: 'Lab B (test)' }).returning();
  let n = 0;

  async function person(labId: string | null, role: Role, label: string = role): Promise<Person> {
    n++;
    const [u] = await database.db
      .insert(users)
      .values({ email: `${label}-${n}@example.org`, displayName: `Test ${label} ${n}`, passwordHash })
      .returning();
    if (labId) await database.db.insert(memberships).values({ labId, userId: u.id, role });
    return { id: u.id, email: u.email, displayName: u.displayName };
  }

  const people = {
    manager: await person(labA.id, 'manager'),
    analyst: await person(labA.id, 'analyst'),
    viewer: await person(labA.id, 'viewer'),
    managerB: await person(labB.id, 'manager', 'managerB'),
  };

  /** A live session for the user, as sign-in would make it: access token plus refresh token. */
  async function session(userId: string) {
    const s = await sessionsRepo.createSession(database.db, { userId, expiresAt: new Date(nowMs + 30 * 86_400_000) });
    const refresh = newOpaqueToken();
    await sessionsRepo.insertRefreshToken(database.db, {
      sessionId: s.id,
      tokenHash: refresh.hash,
      expiresAt: new Date(nowMs + 14 * 86_400_000),
    });
    const access = await (await ctx.signer()).sign({ userId, sessionId: s.id });
    return { sessionId: s.id, accessToken: access.token, refreshCookie: `hm_refresh=${refresh.token}` };
  }

  async function invitation(labId: string, email: string, role: Role = 'analyst', invitedBy = people.manager.id) {
    const t = newOpaqueToken();
    const inv = await labsRepo.insertInvitation(database.db, {
      labId,
      email,
      role,
      tokenHash: t.hash,
      invitedBy,
      expiresAt: new Date(nowMs + 7 * 86_400_000),
    });
    return { id: inv.id, token: t.token };
  }

  async function resetToken(userId: string) {
    const t = newOpaqueToken();
    await sessionsRepo.insertPasswordReset(database.db, { userId, tokenHash: t.hash, expiresAt: new Date(nowMs + 30 * 60_000) });
    return t.token;
  }

  return {
    database,
    app,
    ctx,
    labA,
    labB,
    people,
    person,
    session,
    invitation,
    resetToken,
    nudges,
    now,
    advance: (ms: number) => void (nowMs += ms),
    api: () => request(app),
  };
}

export type AuthFixture = Awaited<ReturnType<typeof authFixture>>;

/** The link in a captured message body (invitation or reset). */
export function linkIn(text: string | null | undefined, kind: 'invite' | 'reset'): string {
  const m = new RegExp(`${TEST_PUBLIC_URL.replace(/[.]/g, '\\.')}/${kind}/([A-Za-z0-9_-]+)`).exec(text ?? '');
  if (!m) throw new Error(`no ${kind} link in message: ${text}`);
  return m[1];
}
