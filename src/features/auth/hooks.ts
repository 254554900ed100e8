import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type {
  AcceptInvitationBody,
  ForgotPasswordBody,
  InvitationPreview,
  LoginBody,
  ResetPasswordBody,
  SessionResponse,
} from '../../../shared/schemas/auth';
import { api } from '../../api/client';
import { keys } from '../../api/keys';
import { useSession } from '../../state/session';
import { confirmLeave } from '../../sync/confirmLeave';

const post = <T>(path: string, body?: unknown) => api<T>(path, { method: 'POST', body, anonymous: true });

export function useSignIn() {
  const setSession = useSession((s) => s.setSession);
  return useMutation({
    mutationFn: (body: LoginBody) => post<SessionResponse>('/auth/login', body),
    onSuccess: setSession,
  });
}

export function useSignOut() {
  const qc = useQueryClient();
  const signOutLocally = useSession((s) => s.signOutLocally);
  return useMutation({
    mutationFn: async () => {
      // Unsynced work is never discarded; the analyst is asked first and it goes out after the next sign-in.
      const waiting = useSession.getState().unsynced;
      if (waiting > 0 && !(await confirmLeave(waiting))) return 'stayed' as const;
      await api<void>('/auth/logout', { method: 'POST' });
    },
    // Forget locally even when the server cannot be reached; the session then ends when the cookie expires.
    onSettled: (outcome) => {
      if (outcome === 'stayed') return;
      signOutLocally();
      qc.clear();
    },
  });
}

export function useForgotPassword() {
  return useMutation({ mutationFn: (body: ForgotPasswordBody) => post<{ message: string }>('/auth/password/forgot', body) });
}

export function useResetPassword() {
  const setSession = useSession((s) => s.setSession);
  return useMutation({
    mutationFn: (body: ResetPasswordBody) => post<SessionResponse>('/auth/password/reset', body),
    onSuccess: setSession,
  });
}

export function useInvitation(token: string) {
  return useQuery({
    queryKey: keys.invitation(token),
    queryFn: () => api<InvitationPreview>(`/auth/invitations/${encodeURIComponent(token)}`, { anonymous: true }),
    retry: false,
  });
}

export function useAcceptInvitation(token: string) {
  const setSession = useSession((s) => s.setSession);
  return useMutation({
    mutationFn: (body: AcceptInvitationBody) => post<SessionResponse>(`/auth/invitations/${encodeURIComponent(token)}/accept`, body),
    onSuccess: setSession,
  });
}
