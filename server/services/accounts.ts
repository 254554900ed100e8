import {
  acceptInvitationBodySchema,
  newAccountSchema,
  type InvitationPreview,
  type LoginBody,
  type Me,
  type ResetPasswordBody,
  type SessionResponse,
} from '../../shared/schemas/auth';
import type { z } from 'zod';
import type { ServerContext } from '../auth/context';
import { hashPassword, verifyPassword } from '../auth/password';
import { assertAcceptablePassword } from '../auth/password-policy';
import { POLICIES, type LimitKey } from '../auth/rate-limit';
import { hashOpaqueToken, newOpaqueToken } from '../auth/tokens';
import { HttpError } from '../http/errors';
import type { Caller } from '../http/routes';
import { resetMessage } from '../mail/messages';
import type { Executor } from '../repos/executor';
import * as labsRepo from '../repos/labs';
import * as outboxRepo from '../repos/outbox';
import * as sessionsRepo from '../repos/sessions';
import * as usersRepo from '../repos/users';
import { audit } from './audit';

export const SESSION = {
  /** A session ends this long after sign-in, however often it refreshes. */
  maxDays: 30,
  /** A refresh token unused this long stops working. */
  refreshIdleDays: 14,
};
export const RESET_MINUTES = 30;
const DAY = 86_400_000;

/** What the router needs to answer: the JSON body, plus the refresh token for the cookie. */
export interface IssuedSession {
  body: SessionResponse;
  refreshToken: string;
  refreshExpiresAt: Date;
}

const invalidCredentials = () => new HttpError(401, 'invalid_credentials', 'That e-mail and password do not match an account.');
const invalidRefresh = () => new HttpError(401, 'invalid_refresh', 'Your sign-in has ended. Sign in again.');
const invalidResetLink = () =>
  new HttpError(400, 'invalid_link', 'This reset link has been used or has expired. Ask for a new one.');
const invalidInvitation = () =>
  new HttpError(404, 'invalid_invitation', 'This invitation has been used, withdrawn or has expired. Ask the lab manager for a new one.');

const loginKeys = (email: string, ip: string): LimitKey[] => [
  { key: `login:account:${email.toLowerCase()}`, policy: POLICIES.loginAccount },
  { key: `login:address:${ip}`, policy: POLICIES.loginAddress },
];

// Compared against when the account does not exist, so a wrong e-mail costs as long as a wrong password.
let dummyHash: Promise<string> | undefined;
const dummy = () => (dummyHash ??= hashPassword('not a real password, only for timing'));

async function meOf(db: Executor, user: { id: string; email: string; displayName: string }): Promise<Me> {
  const labs = await labsRepo.membershipsOf(db, user.id);
  return { user: { id: user.id, email: user.email, displayName: user.displayName }, labs };
}

export function meFromCaller(caller: Caller): Me {
  return {
    user: { id: caller.userId, email: caller.email, displayName: caller.displayName },
    labs: [...caller.labs],
  };
}

/**
 * A transaction that ends by signing an access token. The signing key is loaded first: without JWT_SECRET it is read
 * (or created) in the database, and on PGlite's single connection doing that inside the open transaction would wait
 * for the transaction forever.
 */
async function sessionTransaction<T>(app: ServerContext, work: (tx: Executor) => Promise<T>): Promise<T> {
  await app.signer();
  return app.database.db.transaction(work);
}

/** Opens a session (a refresh-token family) inside the caller's transaction and signs its first access token. */
async function openSession(
  app: ServerContext,
  tx: Executor,
  user: { id: string; email: string; displayName: string },
  userAgent: string | undefined,
): Promise<IssuedSession> {
  const now = app.now();
  const session = await sessionsRepo.createSession(tx, {
    userId: user.id,
    expiresAt: new Date(now.getTime() + SESSION.maxDays * DAY),
    userAgent: userAgent?.slice(0, 300) ?? null,
  });
  return issueTokens(app, tx, session, user);
}

async function issueTokens(
  app: ServerContext,
  tx: Executor,
  session: { id: string; expiresAt: Date },
  user: { id: string; email: string; displayName: string },
): Promise<IssuedSession> {
  const now = app.now();
  const refresh = newOpaqueToken();
  const refreshExpiresAt = new Date(Math.min(session.expiresAt.getTime(), now.getTime() + SESSION.refreshIdleDays * DAY));
  await sessionsRepo.insertRefreshToken(tx, { sessionId: session.id, tokenHash: refresh.hash, expiresAt: refreshExpiresAt });
  const access = await (await app.signer()).sign({ userId: user.id, sessionId: session.id });
  const me = await meOf(tx, user);
  return {
    body: { ...me, accessToken: access.token, accessTokenExpiresAt: access.expiresAt.toISOString() },
    refreshToken: refresh.token,
    refreshExpiresAt,
  };
}

export async function login(app: ServerContext, body: LoginBody, meta: { ip: string; userAgent?: string }): Promise<IssuedSession> {
  const keys = loginKeys(body.email, meta.ip);
  await app.limiter.check(keys);
  const user = await usersRepo.findByEmail(app.database.db, body.email);
  const ok = user?.passwordHash
    ? await verifyPassword(body.password, user.passwordHash)
    : (await verifyPassword(body.password, await dummy()), false);
  if (!user || !ok || user.disabledAt) {
    await app.limiter.fail(keys);
    throw invalidCredentials();
  }
  // A success clears the account's count; the address count only decays, so one good account cannot reset it.
  await app.limiter.succeed([keys[0]]);
  return sessionTransaction(app, (tx) => openSession(app, tx, user, meta.userAgent));
}

/** Rotates the refresh token. A token presented a second time means it was copied: the whole family is revoked. */
export async function refresh(app: ServerContext, token: string | undefined): Promise<IssuedSession> {
  if (!token) throw invalidRefresh();
  const db = app.database.db;
  const found = await sessionsRepo.refreshTokenByHash(db, hashOpaqueToken(token));
  if (!found) throw invalidRefresh();
  const now = app.now();
  const { token: row, session } = found;
  if (session.revokedAt || session.expiresAt <= now || row.expiresAt <= now) throw invalidRefresh();
  const user = await usersRepo.findById(db, session.userId);
  if (!user || user.disabledAt) throw invalidRefresh();
  const issued = row.usedAt
    ? null
    : await sessionTransaction(app, async (tx) => {
        if (!(await sessionsRepo.useRefreshToken(tx, row.id, now))) return null;
        await sessionsRepo.touchSession(tx, session.id, now);
        return issueTokens(app, tx, session, user);
      });
  if (!issued) {
    await sessionsRepo.revokeSession(db, session.id, 'reuse_detected', now);
    app.log(`refresh token reuse detected: session ${session.id} of user ${user.id} revoked`);
    throw new HttpError(401, 'refresh_reused', 'This sign-in was used from somewhere else and has been ended. Sign in again.');
  }
  return issued;
}

export async function logout(app: ServerContext, token: string | undefined, caller: Caller | null): Promise<void> {
  const now = app.now();
  if (token) {
    const found = await sessionsRepo.refreshTokenByHash(app.database.db, hashOpaqueToken(token));
    if (found) await sessionsRepo.revokeSession(app.database.db, found.session.id, 'signed_out', now);
  }
  if (caller) await sessionsRepo.revokeSession(app.database.db, caller.sessionId, 'signed_out', now);
}

export async function forgotPassword(app: ServerContext, email: string, ip: string): Promise<void> {
  const keys: LimitKey[] = [
    { key: `reset:account:${email}`, policy: POLICIES.resetAccount },
    { key: `reset:address:${ip}`, policy: POLICIES.resetAddress },
  ];
  await app.limiter.check(keys);
  // Every request counts (it sends mail); the count clears when a reset is completed.
  await app.limiter.fail(keys);
  const user = await usersRepo.findByEmail(app.database.db, email);
  if (!user || user.disabledAt) return; // same answer either way: no account probing
  const now = app.now();
  await app.database.db.transaction(async (tx) => {
    await sessionsRepo.expireOpenResets(tx, user.id, now);
    const t = newOpaqueToken();
    await sessionsRepo.insertPasswordReset(tx, {
      userId: user.id,
      tokenHash: t.hash,
      expiresAt: new Date(now.getTime() + RESET_MINUTES * 60_000),
    });
    const msg = resetMessage({ link: `${app.publicUrl}/reset/${t.token}`, minutes: RESET_MINUTES });
    await outboxRepo.enqueue(tx, { to: user.email, ...msg });
  });
  app.mailNudge();
}

export async function resetPassword(
  app: ServerContext,
  body: ResetPasswordBody,
  meta: { ip: string; userAgent?: string },
): Promise<IssuedSession> {
  const addressKey: LimitKey = { key: `reset:address:${meta.ip}`, policy: POLICIES.resetAddress };
  await app.limiter.check([addressKey]);
  const db = app.database.db;
  const now = app.now();
  const reset = await sessionsRepo.passwordResetByHash(db, hashOpaqueToken(body.token));
  const user = reset && !reset.usedAt && reset.expiresAt > now ? await usersRepo.findById(db, reset.userId) : undefined;
  if (!reset || !user || user.disabledAt) {
    await app.limiter.fail([addressKey]);
    throw invalidResetLink();
  }
  assertAcceptablePassword(body.password, user.email);
  const passwordHash = await hashPassword(body.password);
  const issued = await sessionTransaction(app, async (tx) => {
    if (!(await sessionsRepo.consumePasswordReset(tx, reset.id, now))) return null;
    await usersRepo.setPassword(tx, user.id, passwordHash);
    // Whoever knew the old password is signed out everywhere.
    await sessionsRepo.revokeUserSessions(tx, user.id, 'password_reset', now);
    await audit(tx, { labId: null, actorId: user.id, action: 'user.password_reset', entity: 'user', entityId: user.id });
    return openSession(app, tx, user, meta.userAgent);
  });
  if (!issued) throw invalidResetLink();
  await app.limiter.succeed([
    { key: `reset:account:${user.email.toLowerCase()}`, policy: POLICIES.resetAccount },
    loginKeys(user.email, meta.ip)[0],
  ]);
  return issued;
}

async function openInvitation(app: ServerContext, token: string) {
  const found = await labsRepo.invitationByHash(app.database.db, hashOpaqueToken(token));
  const inv = found?.invitation;
  if (!inv || inv.acceptedAt || inv.revokedAt || inv.expiresAt <= app.now()) throw invalidInvitation();
  return found;
}

export async function previewInvitation(app: ServerContext, token: string): Promise<InvitationPreview> {
  const { invitation: inv, labName, invitedByName } = await openInvitation(app, token);
  const existing = await usersRepo.findByEmail(app.database.db, inv.email);
  return {
    labName,
    email: inv.email,
    role: inv.role,
    invitedBy: invitedByName,
    expiresAt: inv.expiresAt.toISOString(),
    existingAccount: Boolean(existing?.passwordHash),
  };
}

/**
 * Joins the invited address to the lab. A new address gets an account with the chosen password; an address that
 * already has one must give that account's password (so an invitation link alone never grants an existing account).
 */
export async function acceptInvitation(
  app: ServerContext,
  token: string,
  body: z.infer<typeof acceptInvitationBodySchema>,
  meta: { ip: string; userAgent?: string },
): Promise<IssuedSession> {
  const { invitation: inv } = await openInvitation(app, token);
  const db = app.database.db;
  const existing = await usersRepo.findByEmail(db, inv.email);
  let passwordHash: string | undefined;
  let displayName: string | undefined;
  if (existing?.passwordHash) {
    const keys = loginKeys(inv.email, meta.ip);
    await app.limiter.check(keys);
    if (existing.disabledAt || !(await verifyPassword(body.password, existing.passwordHash))) {
      await app.limiter.fail(keys);
      throw new HttpError(401, 'invalid_credentials', `Enter the current password of the account ${inv.email}.`);
    }
    await app.limiter.succeed([keys[0]]);
  } else {
    displayName = newAccountSchema.parse({ displayName: body.displayName ?? '', password: body.password }).displayName;
    assertAcceptablePassword(body.password, inv.email);
    passwordHash = await hashPassword(body.password);
  }
  const now = app.now();
  const issued = await sessionTransaction(app, async (tx) => {
    let user = existing;
    if (!user) user = await usersRepo.insert(tx, { email: inv.email, displayName: displayName!, passwordHash: passwordHash! });
    else if (passwordHash) await usersRepo.setPassword(tx, user.id, passwordHash);
    if (!(await labsRepo.consumeInvitation(tx, inv.id, user.id, now))) return null;
    if (!(await labsRepo.membership(tx, inv.labId, user.id))) {
      await labsRepo.insertMembership(tx, inv.labId, user.id, inv.role);
      await audit(tx, {
        labId: inv.labId,
        actorId: user.id,
        action: 'member.join',
        entity: 'membership',
        entityId: user.id,
        after: { email: user.email, role: inv.role, invitationId: inv.id },
      });
    }
    return openSession(app, tx, user, meta.userAgent);
  });
  if (!issued) throw invalidInvitation();
  return issued;
}
