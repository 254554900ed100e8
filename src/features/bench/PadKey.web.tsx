// A key of the entry panel on the web: native click and key listeners instead of Pressable. Pressable keeps hover, focus and
// pressed state in React, so each tap on a key rendered it two or three more times (press in, press out, hover),
// work that lands between the finger and the frame that shows the digit or the saved reading. The pressed look is
// set on the element directly, as on the Mark target (TapTarget.web.tsx).
import { useEffect, useRef } from 'react';
import { View } from 'react-native';
import type { PadKeyProps } from './PadKey';

export type { PadKeyProps } from './PadKey';

export function PadKey({ onPress, disabled = false, selected, style, pressedStyle: _phoneOnly, children, ...a11y }: PadKeyProps) {
  const ref = useRef<View>(null);
  const press = useRef(onPress);
  press.current = onPress;
  useEffect(() => {
    const node = ref.current as unknown as HTMLElement | null;
    if (disabled || !node?.addEventListener) return;
    const release = () => node.style.removeProperty('opacity');
    const down = (e: PointerEvent) => {
      if (e.button !== 0 && e.pointerType === 'mouse') return;
      // A tap does not move the focus to the key (no mousedown: no focus change, dispatched through the page's
      // listeners between the finger and the frame); Tab still reaches every key. The click still follows.
      e.preventDefault();
      node.style.opacity = '0.75';
    };
    // A click is a completed tap: pressed and released on the key (sliding off cancels it).
    const click = () => press.current();
    const key = (e: KeyboardEvent) => {
      if ((e.key === 'Enter' || e.key === ' ') && !e.repeat) {
        e.preventDefault();
        press.current();
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
  return (
    // Focusable even while disabled (announced as disabled, presses ignored): taking the tabindex away from a key
    // that has the focus made the browser lay out the page there and then, inside the tap that disabled it.
    <View ref={ref} accessibilityRole="button" accessibilityState={{ disabled, selected }} focusable style={style} {...a11y}>
      {children}
    </View>
  );
}
