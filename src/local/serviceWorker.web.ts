// The service worker (generated at build time into dist/sw.js, see server/build-web.mjs) caches the app shell so
// the page opens with no network. The dev server has none.
export function registerServiceWorker(): void {
  if (process.env.NODE_ENV !== 'production' || typeof navigator === 'undefined' || !('serviceWorker' in navigator)) return;
  const go = () => {
    navigator.serviceWorker.register('/sw.js', { scope: '/' }).catch((e) => {
      // Not fatal: the app works online without it; say why offline opening will not work.
      console.warn('Halfmark: offline cache unavailable:', e instanceof Error ? e.message : e);
    });
  };
  if (document.readyState === 'complete') go();
  else window.addEventListener('load', go, { once: true });
}
