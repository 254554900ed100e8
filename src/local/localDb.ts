// Opens the local database once per page: owner lock → open → migrate → read back a test write → storage check.
// Screens read the state with useLocalDb(); nothing records unless the state is 'ready'.
// The database file of expo-sqlite: its index adds SQLiteProvider and, through it, expo-asset (metro.config.js).
import { openDatabaseAsync } from 'expo-sqlite/build/SQLiteDatabase.js';
import { useSyncExternalStore } from 'react';
import { migrate } from './migrations';
import { acquireOwnerLock } from './ownerLock';
import { requestPersistentStorage, type StorageState } from './persistence';
import { registerServiceWorker } from './serviceWorker';
import { LocalStore } from './store';

export type LocalDbState =
  | { status: 'opening' }
  | { status: 'other-tab' }
  | { status: 'unavailable'; reason: string }
  | { status: 'ready'; store: LocalStore; storage: StorageState; lockGuard: boolean };

const DB_NAME = 'halfmark.db';

const OPENING: LocalDbState = { status: 'opening' };
let state: LocalDbState = OPENING;
let started = false;
const listeners = new Set<() => void>();

function set(next: LocalDbState) {
  state = next;
  for (const l of listeners) l();
}

async function open(): Promise<void> {
  const owner = await acquireOwnerLock(() => void openOwned(true));
  if (owner === 'other-tab') {
    set({ status: 'other-tab' });
    return;
  }
  await openOwned(owner === 'owner');
}

async function openOwned(lockGuard: boolean): Promise<void> {
  set(OPENING);
  try {
    const storage = await requestPersistentStorage();
    if (!storage.opfs) {
      set({ status: 'unavailable', reason: 'This browser gives the page no private file storage (a private window, or storage blocked in settings).' });
      return;
    }
    const db = await openDatabaseAsync(DB_NAME);
    await migrate(db);
    const store = await LocalStore.open(db);
    exposeForAutomation(store);
    set({ status: 'ready', store, storage, lockGuard });
  } catch (e) {
    set({ status: 'unavailable', reason: e instanceof Error ? e.message : String(e) });
  }
}

export function startLocalDb(): void {
  if (started) return;
  started = true;
  registerServiceWorker();
  void open();
}

export function useLocalDb(): LocalDbState {
  return useSyncExternalStore(
    (l) => {
      startLocalDb();
      listeners.add(l);
      return () => listeners.delete(l);
    },
    () => state,
    () => OPENING,
  );
}

/**
 * Benchmarks seed long runs through the real store (tests/bench/tap-latency.bench.ts). Only when the page's own
 * storage holds the opt-in flag, which nothing in the app sets.
 */
function exposeForAutomation(store: LocalStore) {
  try {
    if (typeof localStorage !== 'undefined' && localStorage.getItem('halfmark.automation') === '1') {
      (globalThis as { __halfmarkStore?: LocalStore }).__halfmarkStore = store;
    }
  } catch {
    /* storage blocked: no automation */
  }
}
