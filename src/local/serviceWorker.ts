// Native builds ship their code in the app: nothing to cache.
export function registerServiceWorker(): void {}
