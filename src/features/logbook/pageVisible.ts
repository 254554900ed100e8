// Whether the app is in front (React Native AppState): in the background it need not hold a live stream open.
import { useSyncExternalStore } from 'react';
import { AppState } from 'react-native';

const subscribe = (onChange: () => void) => {
  const sub = AppState.addEventListener('change', onChange);
  return () => sub.remove();
};

export function usePageVisible(): boolean {
  return useSyncExternalStore(subscribe, () => AppState.currentState !== 'background', () => true);
}
