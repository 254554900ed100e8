// Connectivity on the web: navigator.onLine says "surely offline" reliably (not "surely online"), and the online
// event is the moment to try again at once instead of waiting for the backoff.
export const isOnline = (): boolean => typeof navigator === 'undefined' || navigator.onLine !== false;
export function onOnline(cb: () => void): () => void {
  if (typeof window === 'undefined') return () => {};
  window.addEventListener('online', cb);
  return () => window.removeEventListener('online', cb);
}
