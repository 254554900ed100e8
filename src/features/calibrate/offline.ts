// The calibrations overview for screens that must work offline (the bench's run setup): every successful fetch is
// written to the device's database, and when the server cannot be reached (or refuses) the last copy is served,
// with the time it was fetched so the screen can say how old it is.
import { useQuery } from '@tanstack/react-query';
import type { CalibrationOverview } from '../../../shared/schemas/calibration-api';
import { api } from '../../api/client';
import { loadCalibrations, saveCalibrations } from '../../local/calibrationsCache';
import { useLocalDb } from '../../local/localDb';
import type { LocalStore } from '../../local/store';
import { calibrationKeys } from './hooks';

export interface OfflineCalibrations {
  overview: CalibrationOverview;
  fetchedAtMs: number;
  /** True when served from the device because the request failed; `error` says why. */
  fromCache: boolean;
  error: string | null;
  /** False when the device's database is not available: the copy will not outlive this page. */
  kept: boolean;
}

export async function fetchCalibrationsOffline(
  labId: string,
  store: LocalStore | null,
  fetchOverview: (labId: string) => Promise<CalibrationOverview> = (id) => api<CalibrationOverview>(`/labs/${id}/calibrations`),
  now: () => number = Date.now,
): Promise<OfflineCalibrations> {
  try {
    const overview = await fetchOverview(labId);
    const fetchedAtMs = now();
    let kept = false;
    if (store) {
      // In the store's write queue, so it never lands inside a recording's transaction.
      kept = await store
        .syncWrite((db) => saveCalibrations(db, overview, fetchedAtMs))
        .then(() => true)
        .catch(() => false);
    }
    return { overview, fetchedAtMs, fromCache: false, error: null, kept };
  } catch (e) {
    const message = e instanceof Error ? e.message : String(e);
    const cached = store ? await loadCalibrations(store.syncDb, labId).catch(() => null) : null;
    if (!cached) throw e;
    return { ...cached, fromCache: true, error: message, kept: true };
  }
}

export function useCalibrationsOffline(labId: string | null) {
  const local = useLocalDb();
  const store = local.status === 'ready' ? local.store : null;
  return useQuery({
    // Under the overview key: the Calibrate section's changes invalidate this too.
    queryKey: [...calibrationKeys.overview(labId ?? 'none'), 'offline', store ? 'device' : 'memory'] as const,
    queryFn: () => fetchCalibrationsOffline(labId!, store),
    // Wait for the device database (it holds the copy); without one, fetch anyway.
    enabled: Boolean(labId) && local.status !== 'opening',
    // The query function itself falls back to the device copy, so it must run even when the browser says offline.
    networkMode: 'always',
    retry: false,
    gcTime: 24 * 3_600_000,
  });
}

/** "fetched 3 min ago" — how old the copy on screen is. */
export function describeAge(fetchedAtMs: number, nowMs: number): string {
  const s = Math.max(0, Math.round((nowMs - fetchedAtMs) / 1000));
  if (s < 60) return 'just now';
  const m = Math.round(s / 60);
  if (m < 60) return `${m} min ago`;
  const h = Math.round(m / 60);
  if (h < 48) return `${h} h ago`;
  return `${Math.round(h / 24)} days ago`;
}
