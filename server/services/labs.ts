import type { InviteBody, Member, PendingInvitation } from '../../shared/schemas/auth';
import type { Role } from '../../shared/schemas/roles';
import type { ServerContext } from '../auth/context';
import { newOpaqueToken } from '../auth/tokens';
import { HttpError, notFound } from '../http/errors';
import type { Caller } from '../http/routes';
import { invitationMessage } from '../mail/messages';
import * as labsRepo from '../repos/labs';
import * as outboxRepo from '../repos/outbox';
import * as sessionsRepo from '../repos/sessions';
import * as usersRepo from '../repos/users';
import { audit } from './audit';

export const INVITATION_DAYS = 7;

type MemberRow = Awaited<ReturnType<typeof labsRepo.members>>[number];
const toMember = (m: MemberRow): Member => ({
  userId: m.userId,
  email: m.email,
  displayName: m.displayName,
  role: m.role,
  disabled: Boolean(m.disabledAt),
  joinedAt: m.joinedAt.toISOString(),
});

export async function listMembers(app: ServerContext, labId: string): Promise<Member[]> {
  return (await labsRepo.members(app.database.db, labId)).map(toMember);
}

async function member(app: ServerContext, labId: string, userId: string): Promise<Member> {
  const m = (await labsRepo.members(app.database.db, labId)).find((x) => x.userId === userId);
  if (!m) throw notFound('Member');
  return toMember(m);
}

export async function listInvitations(app: ServerContext, labId: string): Promise<PendingInvitation[]> {
  const rows = await labsRepo.pendingInvitations(app.database.db, labId, app.now());
  return rows.map((r) => ({ ...r, createdAt: r.createdAt.toISOString(), expiresAt: r.expiresAt.toISOString() }));
}

/** Creates the invitation and its e-mail in one transaction; an open invitation to the same address is replaced. */
export async function invite(app: ServerContext, caller: Caller, labId: string, body: InviteBody): Promise<PendingInvitation> {
  const db = app.database.db;
  const existing = await usersRepo.findByEmail(db, body.email);
  if (existing && (await labsRepo.membership(db, labId, existing.id))) {
    throw new HttpError(409, 'already_member', `${body.email} is already a member of this lab.`);
  }
  const lab = await labsRepo.findLab(db, labId);
  if (!lab) throw notFound('Lab');
  const now = app.now();
  const token = newOpaqueToken();
  const row = await db.transaction(async (tx) => {
    const replaced = await labsRepo.revokeInvitations(tx, labId, { email: body.email }, now);
    const inv = await labsRepo.insertInvitation(tx, {
      labId,
      email: body.email,
      role: body.role,
      tokenHash: token.hash,
      invitedBy: caller.userId,
      expiresAt: new Date(now.getTime() + INVITATION_DAYS * 86_400_000),
    });
    const msg = invitationMessage({
      labName: lab.name,
      inviterName: caller.displayName,
      role: body.role,
      link: `${app.publicUrl}/invite/${token.token}`,
      days: INVITATION_DAYS,
    });
    await outboxRepo.enqueue(tx, { to: body.email, ...msg });
    await audit(tx, {
      labId,
      actorId: caller.userId,
      action: 'invitation.create',
      entity: 'invitation',
      entityId: inv.id,
      before: replaced.length ? { replaced: replaced.map((r) => r.id) } : null,
      after: { email: inv.email, role: inv.role, expiresAt: inv.expiresAt.toISOString() },
    });
    return inv;
  });
  app.mailNudge();
  return {
    id: row.id,
    email: row.email,
    role: row.role,
    invitedBy: caller.displayName,
    createdAt: row.createdAt.toISOString(),
    expiresAt: row.expiresAt.toISOString(),
  };
}

export async function revokeInvitation(app: ServerContext, caller: Caller, labId: string, invitationId: string): Promise<void> {
  await app.database.db.transaction(async (tx) => {
    const [inv] = await labsRepo.revokeInvitations(tx, labId, { id: invitationId }, app.now());
    if (!inv) throw notFound('Open invitation');
    await audit(tx, {
      labId,
      actorId: caller.userId,
      action: 'invitation.revoke',
      entity: 'invitation',
      entityId: inv.id,
      before: { email: inv.email, role: inv.role },
    });
  });
}

export async function changeRole(app: ServerContext, caller: Caller, labId: string, userId: string, role: Role): Promise<Member> {
  await app.database.db.transaction(async (tx) => {
    const m = await labsRepo.membership(tx, labId, userId);
    if (!m) throw notFound('Member');
    if (m.role === role) return;
    if (m.role === 'manager' && (await labsRepo.activeManagerCount(tx, labId)) <= 1) {
      throw new HttpError(409, 'last_manager', 'A lab needs at least one manager. Make someone else manager first.');
    }
    await labsRepo.setRole(tx, labId, userId, role);
    await audit(tx, {
      labId,
      actorId: caller.userId,
      action: 'member.role',
      entity: 'membership',
      entityId: userId,
      before: { role: m.role },
      after: { role },
    });
  });
  return member(app, labId, userId);
}

/**
 * Disabling is an account state (it ends every session of the user at once), so a manager may only do it for
 * someone whose every lab they manage; otherwise one lab could lock a person out of another.
 */
export async function setDisabled(
  app: ServerContext,
  caller: Caller,
  labId: string,
  userId: string,
  disabled: boolean,
): Promise<Member> {
  if (userId === caller.userId) throw new HttpError(409, 'cannot_disable_self', 'You cannot disable your own account.');
  const now = app.now();
  await app.database.db.transaction(async (tx) => {
    if (!(await labsRepo.membership(tx, labId, userId))) throw notFound('Member');
    const theirLabs = await labsRepo.membershipsOf(tx, userId);
    if (theirLabs.some((l) => caller.roleIn(l.labId) !== 'manager')) {
      throw new HttpError(409, 'member_of_other_labs', 'This person also belongs to a lab you do not manage; ask its manager.');
    }
    const user = await usersRepo.findById(tx, userId);
    if (!user || Boolean(user.disabledAt) === disabled) return;
    await usersRepo.setDisabled(tx, userId, disabled ? now : null);
    if (disabled) await sessionsRepo.revokeUserSessions(tx, userId, 'disabled', now);
    for (const l of theirLabs) {
      await audit(tx, {
        labId: l.labId,
        actorId: caller.userId,
        action: disabled ? 'member.disable' : 'member.enable',
        entity: 'user',
        entityId: userId,
        before: { disabled: !disabled },
        after: { disabled },
      });
    }
  });
  return member(app, labId, userId);
}
