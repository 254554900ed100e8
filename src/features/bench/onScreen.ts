// Whether a view is on screen. Phone: always (the bench keeps its curve in view on a phone's own layout). Web:
// onScreen.web.ts watches it with an IntersectionObserver.
import type { View } from 'react-native';

export function useOnScreen(_view: View | null): boolean {
  return true;
}
