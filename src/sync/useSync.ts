// One sync engine per page, started when the local database is open and someone is signed in. Its status feeds the
// indicator; its waiting count goes to the session store so signing out can warn.
import { useEffect, useSyncExternalStore } from 'react';
import { refreshSession } from '../api/client';
import { useLocalDb } from '../local/localDb';
import type { LocalStore } from '../local/store';
import { useSession } from '../state/session';
import { SyncEngine, type SyncStatus } from './engine';
import { httpTransport } from './httpTransport';
import { openSyncStore, type SqliteSyncStore } from './localStore';
import { isOnline, onOnline } from './network';

let engine: SyncEngine | null = null;
let store: SqliteSyncStore | null = null;
let owner: LocalStore | null = null;
let status: SyncStatus | null = null;
let unCommitted: (() => void) | null = null;
let pushTimer: ReturnType<typeof setTimeout> | null = null;
const listeners = new Set<() => void>();

/**
 * A recorded write is sent soon after it commits, so a colleague following the run sees it within a second or two;
 * a short delay gathers a burst of taps into one push.
 */
const PUSH_DELAY_MS = 400;

async function startFor(local: LocalStore) {
  if (owner === local) return;
  engine?.stop();
  unCommitted?.();
  owner = local;
  unCommitted = local.onCommitted(() => {
    if (pushTimer !== null) return;
    pushTimer = setTimeout(() => {
      pushTimer = null;
      requestSync();
    }, PUSH_DELAY_MS);
  });
  store = await openSyncStore(local, { defaultLab: () => useSession.getState().activeLabId });
  engine = new SyncEngine(
    store,
    httpTransport({
      accessToken: async () => useSession.getState().accessToken,
      refresh: async () => (await refreshSession())?.accessToken ?? null,
    }),
    { isOnline, onOnline, log: (msg, err) => console.warn(`[sync] ${msg}`, err) },
  );
  engine.subscribe((s) => {
    status = s;
    useSession.getState().setUnsynced(s.waiting);
    for (const l of listeners) l();
  });
  engine.start();
}

/** Ask for a sync now (after a reading is saved, say); cheap when one is running (single-flight). */
export function requestSync(): void {
  void engine?.sync();
}

export function useSyncStatus(): { status: SyncStatus | null; signedIn: boolean; rejected: () => Promise<{ reason: string | null; entity: string }[]> } {
  const local = useLocalDb();
  const signedIn = useSession((s) => s.user !== null);
  useEffect(() => {
    if (local.status === 'ready' && signedIn) void startFor(local.store);
  }, [local, signedIn]);
  const s = useSyncExternalStore(
    (l) => {
      listeners.add(l);
      return () => listeners.delete(l);
    },
    () => status,
    () => null,
  );
  return { status: s, signedIn, rejected: async () => (store ? store.rejected() : []) };
}
