// The native listeners behind the web's tap targets (TapTarget.web.tsx: acts on the press; PadKey.web.tsx: on the
// click). No React state: the pressed look is set on the element, and the press calls preventDefault, so no
// mousedown/mouseup (nor the focus change and hit tests they bring) come between the finger and the frame; the
// click still follows. Enter and Space act from the keyboard.
import { useEffect, useRef } from 'react';
import type { View } from 'react-native';

export interface PressHandlers {
  /** Opacity while pressed. */
  pressedOpacity: string;
  onDown?(e: PointerEvent): void;
  onClick?(): void;
  onKey(): void;
}

export function usePressTarget(disabled: boolean, handlers: PressHandlers) {
  const ref = useRef<View>(null);
  const h = useRef(handlers);
  h.current = handlers;
  useEffect(() => {
    const node = ref.current as unknown as HTMLElement | null;
    if (disabled || !node?.addEventListener) return;
    const release = () => node.style.removeProperty('opacity');
    const down = (e: PointerEvent) => {
      if (e.button !== 0 && e.pointerType === 'mouse') return;
      e.preventDefault();
      node.style.opacity = h.current.pressedOpacity;
      h.current.onDown?.(e);
    };
    const click = () => h.current.onClick?.();
    const key = (e: KeyboardEvent) => {
      if ((e.key === 'Enter' || e.key === ' ') && !e.repeat) {
        e.preventDefault();
        h.current.onKey();
      }
    };
    const ends = ['pointerup', 'pointercancel', 'pointerleave'] as const;
    node.addEventListener('pointerdown', down);
    for (const t of ends) node.addEventListener(t, release);
    node.addEventListener('click', click);
    node.addEventListener('keydown', key);
    return () => {
      node.removeEventListener('pointerdown', down);
      for (const t of ends) node.removeEventListener(t, release);
      node.removeEventListener('click', click);
      node.removeEventListener('keydown', key);
      release();
    };
  }, [disabled]);
  return ref;
}
