// Phone builds take the instant from Pressable's onPressIn (see MarkTargets); nothing to attach here.
import type { RefObject } from 'react';

export function usePointerDown(_ref: RefObject<unknown>, _onDown: (monoMs: number) => void, _enabled: boolean): { handledRecently(): boolean } {
  return { handledRecently: () => false };
}
