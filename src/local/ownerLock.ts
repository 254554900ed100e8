// On a phone app there is one process: it always owns its database.
export type OwnerResult = 'owner' | 'other-tab' | 'unsupported';

export function acquireOwnerLock(_onLaterOwner: () => void): Promise<OwnerResult> {
  return Promise.resolve('owner');
}
