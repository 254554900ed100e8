import type { AuditPage } from '../../shared/schemas/auth';
import type { ServerContext } from '../auth/context';
import type { Executor } from '../repos/executor';
import * as auditRepo from '../repos/audit';

export interface AuditEntryInput {
  /** Null for account-level events that belong to no lab (e.g. a password reset). */
  labId: string | null;
  actorId: string | null;
  /** dotted verb, e.g. 'member.role', 'invitation.create', 'run.submit' */
  action: string;
  entity: string;
  entityId?: string | null;
  before?: unknown;
  after?: unknown;
}

/**
 * Appends to the audit log. Call it with the transaction that makes the change, so the change and its record commit
 * or fail together. There is deliberately no update or delete counterpart.
 */
export async function audit(tx: Executor, e: AuditEntryInput): Promise<void> {
  await auditRepo.insert(tx, {
    labId: e.labId,
    actorId: e.actorId,
    action: e.action,
    entity: e.entity,
    entityId: e.entityId ?? null,
    before: e.before ?? null,
    after: e.after ?? null,
  });
}

/** `before` is the cursor of the previous page (`nextBefore`): the id of its last entry, compared as (at, id). */
export async function auditPage(app: ServerContext, labId: string, opts: { before?: string; limit: number }): Promise<AuditPage> {
  const rows = await auditRepo.page(app.database.db, labId, { afterId: opts.before, limit: opts.limit + 1 });
  const more = rows.length > opts.limit;
  const entries = rows.slice(0, opts.limit).map((r) => ({ ...r, at: r.at.toISOString() }));
  return { entries, nextBefore: more ? entries[entries.length - 1].id : null };
}
