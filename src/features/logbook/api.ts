// Server data of the Logbook, through react-query with the key factory of src/api/keys.ts.
import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { ImportBody, ImportPreview, RunDetail, RunListQueryInput, RunListResponse } from '../../../shared/schemas/desk';
import { api } from '../../api/client';
import { keys } from '../../api/keys';
import { activeMembership, useSession } from '../../state/session';


export function toQueryString(q: Record<string, unknown>): string {
  const p = new URLSearchParams();
  for (const [k, v] of Object.entries(q)) if (v !== undefined && v !== null && v !== '') p.set(k, String(v));
  const s = p.toString();
  return s ? `?${s}` : '';
}

export function useActiveLab() {
  return useSession((s) => activeMembership(s));
}

export function useRunsList(labId: string | undefined, q: RunListQueryInput) {
  return useQuery({
    queryKey: keys.runs(labId ?? '-', q),
    queryFn: () => api<RunListResponse>(`/labs/${labId}/runs${toQueryString(q)}`),
    enabled: Boolean(labId),
    placeholderData: keepPreviousData,
  });
}

export function useRunDetail(runId: string | undefined) {
  return useQuery({ queryKey: keys.run(runId ?? '-'), queryFn: () => api<RunDetail>(`/runs/${runId}`), enabled: Boolean(runId) });
}

function useRunMutation<B>(runId: string, path: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: B) => api<unknown>(`/runs/${runId}/${path}`, { method: 'POST', body }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: keys.run(runId) });
      void qc.invalidateQueries({ queryKey: ['lab'] });
    },
  });
}

export const useComment = (runId: string) => useRunMutation<{ body: string }>(runId, 'comments');
export const useSubmit = (runId: string) => useRunMutation<{ note: string }>(runId, 'submit');
export const useReturn = (runId: string) => useRunMutation<{ comment: string }>(runId, 'return');
export const useApprove = (runId: string) => useRunMutation<{ password: string; comment: string }>(runId, 'approve');
export const useReopen = (runId: string) => useRunMutation<{ reason: string }>(runId, 'revisions');

export function useImportPreview(labId: string | undefined) {
  return useMutation({
    mutationFn: (body: { csv: string; mapping?: unknown; rateMlPerS?: number }) =>
      api<ImportPreview>(`/labs/${labId}/imports/preview`, { method: 'POST', body }),
  });
}

export function useImport(labId: string | undefined) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: ImportBody) => api<{ runId: string; readings: number }>(`/labs/${labId}/imports`, { method: 'POST', body }),
    onSuccess: () => void qc.invalidateQueries({ queryKey: keys.allRuns(labId ?? '-') }),
  });
}
