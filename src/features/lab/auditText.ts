import type { AuditEntry } from '../../../shared/schemas/auth';

/** One line per audit entry, in words; unknown actions fall back to the raw action name. */
export function describeAudit(e: AuditEntry): string {
  const who = e.actorName ?? 'Someone';
  const after = (e.after ?? {}) as Record<string, unknown>;
  const before = (e.before ?? {}) as Record<string, unknown>;
  switch (e.action) {
    case 'invitation.create':
      return `${who} invited ${after.email} as ${after.role}`;
    case 'invitation.revoke':
      return `${who} withdrew the invitation to ${before.email}`;
    case 'member.join':
      return `${who} joined as ${after.role}`;
    case 'member.role':
      return `${who} changed a role from ${before.role} to ${after.role}`;
    case 'member.disable':
      return `${who} disabled an account`;
    case 'member.enable':
      return `${who} enabled an account again`;
    default:
      return `${who}: ${e.action} (${e.entity})`;
  }
}
