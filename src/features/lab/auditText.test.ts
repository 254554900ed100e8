import { describe, expect, it } from 'vitest';
import { describeAudit } from './auditText';

const base = { id: '1', at: '2026-01-01T00:00:00Z', actorId: 'u', actorName: 'Sasha', entity: 'membership', entityId: 'x', before: null, after: null };

describe('describeAudit', () => {
  it('words the known actions from before/after', () => {
    expect(describeAudit({ ...base, action: 'member.role', before: { role: 'viewer' }, after: { role: 'analyst' } })).toBe(
      'Sasha changed a role from viewer to analyst',
    );
    expect(describeAudit({ ...base, action: 'invitation.create', after: { email: 'a@b.org', role: 'viewer' } })).toBe('Sasha invited a@b.org as viewer');
  });
  it('falls back to the action name for actions of other areas', () => {
    expect(describeAudit({ ...base, actorName: null, action: 'run.submit', entity: 'run' })).toBe('Someone: run.submit (run)');
  });
});
