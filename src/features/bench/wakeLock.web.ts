// Keep the screen on while a run is live (Screen Wake Lock API). The browser drops the lock whenever the page is
// hidden, so it is asked for again when the page comes back.
import { useEffect, useState } from 'react';

export type WakeState = 'held' | 'unsupported' | 'refused' | 'off';

export function useScreenAwake(active: boolean): WakeState {
  const [state, setState] = useState<WakeState>('off');
  useEffect(() => {
    if (!active) {
      setState('off');
      return;
    }
    const wl = typeof navigator !== 'undefined' ? (navigator as Navigator & { wakeLock?: { request(t: 'screen'): Promise<{ release(): Promise<void>; addEventListener(e: string, f: () => void): void }> } }).wakeLock : undefined;
    if (!wl) {
      setState('unsupported');
      return;
    }
    let sentinel: { release(): Promise<void> } | null = null;
    let stopped = false;
    const acquire = () => {
      if (stopped || document.visibilityState !== 'visible') return;
      wl.request('screen').then(
        (s) => {
          if (stopped) {
            void s.release().catch(() => undefined);
            return;
          }
          sentinel = s;
          setState('held');
          s.addEventListener('release', () => !stopped && setState('off'));
        },
        () => setState('refused'),
      );
    };
    const onVisible = () => document.visibilityState === 'visible' && acquire();
    acquire();
    document.addEventListener('visibilitychange', onVisible);
    return () => {
      stopped = true;
      document.removeEventListener('visibilitychange', onVisible);
      void sentinel?.release().catch(() => undefined);
    };
  }, [active]);
  return state;
}
