// Ask the browser to keep this origin's storage (it may refuse: then it can clear it under storage pressure).
export interface StorageState {
  /** true: the browser promised to keep the data; false: best effort only; null: the browser cannot tell. */
  persisted: boolean | null;
  /** OPFS is there at all (absent in some private windows): without it nothing can be saved. */
  opfs: boolean;
}

export async function requestPersistentStorage(): Promise<StorageState> {
  const storage = typeof navigator !== 'undefined' ? navigator.storage : undefined;
  const opfs = Boolean(storage && 'getDirectory' in storage);
  if (!storage?.persist) return { persisted: null, opfs };
  try {
    const persisted = (await storage.persisted()) || (await storage.persist());
    return { persisted, opfs };
  } catch {
    return { persisted: null, opfs };
  }
}
