// Keep the screen on while a run is live (expo-keep-awake on a phone build).
import { activateKeepAwakeAsync, deactivateKeepAwake } from 'expo-keep-awake';
import { useEffect, useState } from 'react';

export type WakeState = 'held' | 'unsupported' | 'refused' | 'off';
const TAG = 'halfmark-run';

export function useScreenAwake(active: boolean): WakeState {
  const [state, setState] = useState<WakeState>('off');
  useEffect(() => {
    if (!active) return;
    activateKeepAwakeAsync(TAG).then(
      () => setState('held'),
      () => setState('refused'),
    );
    return () => {
      void deactivateKeepAwake(TAG);
      setState('off');
    };
  }, [active]);
  return state;
}
