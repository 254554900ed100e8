// Connectivity for the sync engine on native: no cheap reliable signal here, so the engine relies on its periodic
// retry and backoff (a failed request is what tells it the network is gone).
export const isOnline = (): boolean => true;
export const onOnline = (_cb: () => void): (() => void) => () => {};
