// One tab owns the local database: the SQLite file sits in OPFS behind an exclusive access handle, so a second tab
// would fail to open it. A Web Lock held for the life of the page decides the owner.
const LOCK = 'halfmark-local-db';

export type OwnerResult = 'owner' | 'other-tab' | 'unsupported';

/** Resolves 'owner' (lock held until the page goes away), or 'other-tab'; then `onOwner` runs when the lock frees. */
export function acquireOwnerLock(onLaterOwner: () => void): Promise<OwnerResult> {
  const locks = typeof navigator !== 'undefined' ? navigator.locks : undefined;
  if (!locks) return Promise.resolve('unsupported');
  return new Promise((resolve) => {
    locks
      .request(LOCK, { ifAvailable: true }, (lock) => {
        if (!lock) {
          resolve('other-tab');
          // Wait in line: when the other tab closes, this one can take over.
          void locks.request(LOCK, () => {
            onLaterOwner();
            return new Promise<void>(() => undefined);
          });
          return undefined;
        }
        resolve('owner');
        return new Promise<void>(() => undefined);
      })
      .catch(() => resolve('unsupported'));
  });
}
