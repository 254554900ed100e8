// The sync as the page sees it: the status the indicator shows, and its waiting count in the session store so
// signing out can warn. The engine itself (syncHost.ts) is loaded and started once the local database is open and
// someone is signed in, so a first visit draws the bench without downloading it.
import { useEffect, useSyncExternalStore } from 'react';
import { useLocalDb } from '../local/localDb';
import { useSession } from '../state/session';
import type { SyncStatus } from './engine';

type Host = typeof import('./syncHost');

let status: SyncStatus | null = null;
let host: Promise<Host> | null = null;
const listeners = new Set<() => void>();

/** Called by the engine on every status change. */
export function publishStatus(s: SyncStatus): void {
  status = s;
  useSession.getState().setUnsynced(s.waiting);
  for (const l of listeners) l();
}

function loadHost(): Promise<Host> {
  // A failed download (offline before the service worker had the file) is tried again on the next change.
  host ??= import('./syncHost').catch((err) => {
    host = null;
    throw err;
  });
  return host;
}

/** Ask for a sync now (after a reading is saved, say); nothing until the engine has started. */
export function requestSync(): void {
  void host?.then((h) => h.requestSync());
}

export function useSyncStatus(): { status: SyncStatus | null; signedIn: boolean; rejected: () => Promise<{ reason: string | null; entity: string }[]> } {
  const local = useLocalDb();
  const signedIn = useSession((s) => s.user !== null);
  useEffect(() => {
    if (local.status !== 'ready' || !signedIn) return;
    loadHost()
      .then((h) => h.startFor(local.store))
      .catch((err) => console.warn('[sync] the sync could not start; recording goes on locally', err));
  }, [local, signedIn]);
  const s = useSyncExternalStore(
    (l) => {
      listeners.add(l);
      return () => listeners.delete(l);
    },
    () => status,
    () => null,
  );
  return { status: s, signedIn, rejected: async () => (host ? (await host).rejected() : []) };
}
