import { createHash } from 'node:crypto';
import { APPROVAL_MEANING } from '../../shared/schemas/desk';
import type { ServerContext } from '../auth/context';
import { verifyPassword } from '../auth/password';
import { POLICIES, type LimitKey } from '../auth/rate-limit';
import { HttpError, notFound } from '../http/errors';
import type { Caller } from '../http/routes';
import type { Executor } from '../repos/executor';
import * as outboxRepo from '../repos/outbox';
import * as repo from '../repos/runs-desk';
import * as usersRepo from '../repos/users';
import { audit } from './audit';
import { logRunChange } from './runs-sync-log';

/**
 * Review of a run: the analyst submits, a manager returns it with a comment or approves it. Approval is a signature:
 * the manager re-enters the password, the audit log records who, when and what the signature means, and the
 * revision is locked with a snapshot. A change after that needs a new revision (reopen), opened with a reason.
 */

const locked = () => new HttpError(409, 'run_locked', 'This run is approved and locked. Open a new revision to change it.');
const wrongState = (status: string, want: string) =>
  new HttpError(409, 'wrong_status', `The run is ${status}; it must be ${want} for this.`);

/** True when the run's current revision is approved: sync and edits must refuse changes to it. */
export async function isLocked(db: Executor, runId: string): Promise<boolean> {
  const rev = await repo.currentRevision(db, runId);
  return Boolean(rev?.rev.lockedAt);
}

async function revisionOf(tx: Executor, runId: string, labId: string) {
  const rev = await repo.currentRevision(tx, runId);
  if (rev) return rev.rev;
  await repo.insertRevision(tx, { runId, labId, revision: 1 });
  return (await repo.currentRevision(tx, runId))!.rev;
}

function link(app: Pick<ServerContext, 'publicUrl'>, runId: string) {
  return `${app.publicUrl}/logbook/${runId}`;
}

/** Writes the submission mail to every manager of the lab, in the caller's transaction. Sync can call this too. */
export async function mailManagersOnSubmission(
  app: Pick<ServerContext, 'publicUrl'>,
  tx: Executor,
  p: { labId: string; runId: string; sampleName: string; analystName: string; note: string },
) {
  const managers = await repo.managersOf(tx, p.labId);
  for (const m of managers) {
    await outboxRepo.enqueue(tx, {
      to: m.email,
      subject: `Run submitted for review: ${p.sampleName}`,
      text: [
        `${p.analystName} submitted the run of ${p.sampleName} for review.`,
        p.note ? `\nNote: ${p.note}` : '',
        '',
        'Open it here to approve it or return it with a comment:',
        link(app, p.runId),
      ].join('\n'),
    });
  }
  return managers.length;
}

async function loadForUpdate(tx: Executor, labId: string, runId: string) {
  const run = await repo.lockRunRow(tx, runId);
  if (!run || run.labId !== labId) throw notFound('Run');
  return run;
}

export async function submit(app: ServerContext, caller: Caller, labId: string, runId: string, note: string) {
  const db = app.database.db;
  const result = await db.transaction(async (tx) => {
    const run = await loadForUpdate(tx, labId, runId);
    const rev = await revisionOf(tx, runId, labId);
    if (rev.lockedAt) throw locked();
    if (['submitted', 'approved'].includes(run.status)) throw wrongState(run.status, 'finished or returned');
    if (['running', 'paused'].includes(run.status)) throw wrongState(run.status, 'finished');
    const at = app.now();
    const updated = await repo.setStatus(tx, runId, 'submitted', at);
    await logRunChange(tx, { labId, runId });
    await repo.insertReviewEvent(tx, { runId, labId, revision: rev.revision, kind: 'submit', actorId: caller.userId, comment: note || null, at });
    await audit(tx, { labId, actorId: caller.userId, action: 'run.submit', entity: 'run', entityId: runId, before: { status: run.status }, after: { status: 'submitted', note, revision: rev.revision } });
    await mailManagersOnSubmission(app, tx, { labId, runId, sampleName: run.sampleName, analystName: caller.displayName, note });
    return { status: updated.status, version: updated.version };
  });
  app.mailNudge();
  return result;
}

async function mailAnalyst(app: ServerContext, tx: Executor, analystId: string, subject: string, lines: string[]) {
  const analyst = await usersRepo.findById(tx, analystId);
  if (!analyst || analyst.disabledAt) return;
  await outboxRepo.enqueue(tx, { to: analyst.email, subject, text: lines.join('\n') });
}

export async function returnRun(app: ServerContext, caller: Caller, labId: string, runId: string, comment: string) {
  const db = app.database.db;
  const result = await db.transaction(async (tx) => {
    const run = await loadForUpdate(tx, labId, runId);
    const rev = await revisionOf(tx, runId, labId);
    if (rev.lockedAt) throw locked();
    if (run.status !== 'submitted') throw wrongState(run.status, 'submitted');
    const at = app.now();
    const updated = await repo.setStatus(tx, runId, 'returned', at);
    await logRunChange(tx, { labId, runId });
    await repo.insertReviewEvent(tx, { runId, labId, revision: rev.revision, kind: 'return', actorId: caller.userId, comment, at });
    await repo.insertComment(tx, { runId, labId, authorId: caller.userId, body: `Returned for changes: ${comment}`, createdAt: at });
    await audit(tx, { labId, actorId: caller.userId, action: 'run.return', entity: 'run', entityId: runId, before: { status: run.status }, after: { status: 'returned', comment, revision: rev.revision } });
    await mailAnalyst(app, tx, run.analystId, `Run returned: ${run.sampleName}`, [
      `${caller.displayName} returned your run of ${run.sampleName} with this comment:`,
      '',
      comment,
      '',
      'Open the run:',
      link(app, runId),
    ]);
    return { status: updated.status, version: updated.version };
  });
  app.mailNudge();
  return result;
}

export async function approve(app: ServerContext, caller: Caller, labId: string, runId: string, body: { password: string; comment: string }) {
  const db = app.database.db;
  // The signature: the approver proves again who they are, whatever the age of their session.
  const me = await usersRepo.findById(db, caller.userId);
  // Guessing the password through approvals is limited like sign-in.
  const keys: LimitKey[] = [{ key: `reauth:account:${caller.userId}`, policy: POLICIES.loginAccount }];
  await app.limiter.check(keys);
  if (!me || !(await verifyPassword(body.password, me.passwordHash))) {
    await app.limiter.fail(keys);
    await db.transaction((tx) =>
      audit(tx, { labId, actorId: caller.userId, action: 'run.approve.refused', entity: 'run', entityId: runId, after: { reason: 'password did not match' } }),
    );
    throw new HttpError(401, 'reauth_failed', 'That password is not right. The run was not approved.');
  }
  await app.limiter.succeed(keys);
  const result = await db.transaction(async (tx) => {
    const run = await loadForUpdate(tx, labId, runId);
    const rev = await revisionOf(tx, runId, labId);
    if (rev.lockedAt) throw locked();
    if (run.status !== 'submitted') throw wrongState(run.status, 'submitted');
    const at = app.now();
    const rs = await repo.readingsOf(tx, runId);
    const readingsHash = createHash('sha256').update(JSON.stringify(rs.map((r) => [r.id, r.kind, r.timeS, r.pH, r.mV, r.replacesId]))).digest('hex');
    const snapshot = { sampleName: run.sampleName, setup: run.setup, result: run.result, notes: run.notes, readingCount: rs.length, readingsHash };
    const updated = await repo.setStatus(tx, runId, 'approved', at);
    await logRunChange(tx, { labId, runId });
    await repo.lockRevision(tx, runId, rev.revision, { lockedAt: at, approvedBy: caller.userId, approvalMeaning: APPROVAL_MEANING, snapshot });
    await repo.insertReviewEvent(tx, { runId, labId, revision: rev.revision, kind: 'approve', actorId: caller.userId, comment: body.comment || null, meaning: APPROVAL_MEANING, at });
    await audit(tx, {
      labId,
      actorId: caller.userId,
      action: 'run.approve',
      entity: 'run',
      entityId: runId,
      before: { status: run.status },
      after: { status: 'approved', revision: rev.revision, meaning: APPROVAL_MEANING, signedAt: at.toISOString(), reauthenticated: true, readingsHash, comment: body.comment },
    });
    await mailAnalyst(app, tx, run.analystId, `Run approved: ${run.sampleName}`, [
      `${caller.displayName} approved your run of ${run.sampleName} (revision ${rev.revision}).`,
      body.comment ? `\nComment: ${body.comment}` : '',
      '',
      link(app, runId),
    ]);
    return { status: updated.status, version: updated.version, revision: rev.revision, lockedAt: at.toISOString() };
  });
  app.mailNudge();
  return result;
}

/** Opens a new revision of an approved run; it goes back to 'finished' and can be changed and submitted again. */
export async function reopen(app: ServerContext, caller: Caller, labId: string, runId: string, reason: string) {
  const db = app.database.db;
  return db.transaction(async (tx) => {
    const run = await loadForUpdate(tx, labId, runId);
    const rev = await revisionOf(tx, runId, labId);
    if (!rev.lockedAt) throw new HttpError(409, 'not_locked', 'This run is not approved; it can be changed as it is.');
    const at = app.now();
    const next = rev.revision + 1;
    await repo.insertRevision(tx, { runId, labId, revision: next, openedBy: caller.userId, reason, openedAt: at });
    const updated = await repo.setStatus(tx, runId, 'finished', at);
    await logRunChange(tx, { labId, runId });
    await repo.insertReviewEvent(tx, { runId, labId, revision: next, kind: 'reopen', actorId: caller.userId, comment: reason, at });
    await audit(tx, { labId, actorId: caller.userId, action: 'run.reopen', entity: 'run', entityId: runId, before: { status: run.status, revision: rev.revision }, after: { status: 'finished', revision: next, reason } });
    return { status: updated.status, version: updated.version, revision: next };
  });
}
