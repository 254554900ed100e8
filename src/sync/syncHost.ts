// The page's one sync engine, loaded by useSync.ts only once someone is signed in and the local database is open
// (after the first screen is drawn): the engine, the schemas it checks answers with and the HTTP transport are not
// part of the start-up download.
import { refreshSession } from '../api/client';
import type { LocalStore } from '../local/store';
import { useSession } from '../state/session';
import { SyncEngine } from './engine';
import { httpTransport } from './httpTransport';
import { openSyncStore, type SqliteSyncStore } from './localStore';
import { isOnline, onOnline } from './network';
import { publishStatus } from './useSync';

let engine: SyncEngine | null = null;
let store: SqliteSyncStore | null = null;
let owner: LocalStore | null = null;
let unCommitted: (() => void) | null = null;
let pushTimer: ReturnType<typeof setTimeout> | null = null;

/**
 * A recorded write is sent soon after it commits, so a colleague following the run sees it within a second or two;
 * a short delay gathers a burst of taps into one push.
 */
const PUSH_DELAY_MS = 400;

export async function startFor(local: LocalStore): Promise<void> {
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
  engine.subscribe(publishStatus);
  engine.start();
}

/** A sync now; cheap when one is running (single-flight). */
export function requestSync(): void {
  void engine?.sync();
}

export async function rejected(): Promise<{ reason: string | null; entity: string }[]> {
  return store ? store.rejected() : [];
}
