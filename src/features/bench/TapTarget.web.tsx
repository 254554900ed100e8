// The tap target on the web: a native pointerdown listener, the earliest moment the page hears of a touch. Its
// event.timeStamp is when the browser received it (the same timeline as performance.now()), so a busy main thread
// does not shift the mark. No Pressable: its press and focus state would re-render the target twice more on every
// tap, work that sits between the touch and the frame that shows the mark. The pressed look is set on the element
// directly; Enter and Space mark from the keyboard.
import { useEffect, useRef } from 'react';
import { View } from 'react-native';
import { monoNow } from './clockSource';
import type { TapTargetProps } from './TapTarget';

export type { TapTargetProps } from './TapTarget';

export function TapTarget({ onTap, disabled, style, pressedStyle: _phoneOnly, children, ...a11y }: TapTargetProps) {
  const ref = useRef<View>(null);
  const tap = useRef(onTap);
  tap.current = onTap;
  useEffect(() => {
    const node = ref.current as unknown as HTMLElement | null;
    if (disabled || !node?.addEventListener) return;
    const release = () => node.style.removeProperty('opacity');
    const down = (e: PointerEvent) => {
      if (e.button !== 0 && e.pointerType === 'mouse') return;
      const now = performance.now();
      const ts = e.timeStamp > 0 && e.timeStamp <= now && now - e.timeStamp < 1000 ? e.timeStamp : now;
      // No mousedown/mouseup after it (the target needs neither, and they would be dispatched through the page's
      // listeners and hit-tested between the touch and the frame that shows the mark); click still follows.
      e.preventDefault();
      node.style.opacity = '0.8';
      tap.current(performance.timeOrigin + ts);
    };
    const key = (e: KeyboardEvent) => {
      if ((e.key === 'Enter' || e.key === ' ') && !e.repeat) {
        e.preventDefault();
        tap.current(monoNow());
      }
    };
    const ends = ['pointerup', 'pointercancel', 'pointerleave'] as const;
    node.addEventListener('pointerdown', down);
    for (const t of ends) node.addEventListener(t, release);
    node.addEventListener('keydown', key);
    return () => {
      node.removeEventListener('pointerdown', down);
      for (const t of ends) node.removeEventListener(t, release);
      node.removeEventListener('keydown', key);
      release();
    };
  }, [disabled]);
  return (
    <View ref={ref} accessibilityRole="button" accessibilityState={{ disabled }} focusable={!disabled} style={style} {...a11y}>
      {children}
    </View>
  );
}
