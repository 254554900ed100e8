// An app's own sandbox is kept until the app is removed.
export interface StorageState {
  persisted: boolean | null;
  opfs: boolean;
}

export async function requestPersistentStorage(): Promise<StorageState> {
  return { persisted: true, opfs: true };
}
