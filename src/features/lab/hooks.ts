import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { AuditPage, InviteBody, Member, PendingInvitation } from '../../../shared/schemas/auth';
import type { Role } from '../../../shared/schemas/roles';
import { api } from '../../api/client';
import { keys } from '../../api/keys';

const lab = (labId: string) => `/labs/${encodeURIComponent(labId)}`;

export function useMembers(labId: string | null) {
  return useQuery({
    queryKey: keys.members(labId ?? ''),
    queryFn: () => api<Member[]>(`${lab(labId!)}/members`),
    enabled: Boolean(labId),
  });
}

export function useInvitations(labId: string | null, enabled: boolean) {
  return useQuery({
    queryKey: keys.invitations(labId ?? ''),
    queryFn: () => api<PendingInvitation[]>(`${lab(labId!)}/invitations`),
    enabled: Boolean(labId) && enabled,
  });
}

export function useAudit(labId: string | null, enabled: boolean) {
  return useQuery({
    queryKey: keys.audit(labId ?? ''),
    queryFn: () => api<AuditPage>(`${lab(labId!)}/audit?limit=50`),
    enabled: Boolean(labId) && enabled,
  });
}

/** Every lab change refreshes the lab's lists (members, invitations, audit). */
function useLabMutation<V, R>(labId: string, fn: (v: V) => Promise<R>) {
  const qc = useQueryClient();
  return useMutation({ mutationFn: fn, onSettled: () => qc.invalidateQueries({ queryKey: keys.lab(labId) }) });
}

export const useInvite = (labId: string) =>
  useLabMutation(labId, (body: InviteBody) => api<PendingInvitation>(`${lab(labId)}/invitations`, { method: 'POST', body }));

export const useWithdrawInvitation = (labId: string) =>
  useLabMutation(labId, (id: string) => api<void>(`${lab(labId)}/invitations/${id}`, { method: 'DELETE' }));

export const useChangeRole = (labId: string) =>
  useLabMutation(labId, (v: { userId: string; role: Role }) =>
    api<Member>(`${lab(labId)}/members/${v.userId}`, { method: 'PATCH', body: { role: v.role } }),
  );

export const useSetDisabled = (labId: string) =>
  useLabMutation(labId, (v: { userId: string; disabled: boolean }) =>
    api<Member>(`${lab(labId)}/members/${v.userId}/${v.disabled ? 'disable' : 'enable'}`, { method: 'POST' }),
  );
