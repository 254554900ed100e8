// The instant a finger touches a target. On the web a native pointerdown listener is the earliest moment the page
// hears of a touch; its event.timeStamp is when the browser received it (same timeline as performance.now()),
// so a busy main thread does not shift the mark.
import { useEffect, useRef, type RefObject } from 'react';

export function usePointerDown(ref: RefObject<unknown>, onDown: (monoMs: number) => void, enabled: boolean): { handledRecently(): boolean } {
  const last = useRef(-Infinity);
  const cb = useRef(onDown);
  cb.current = onDown;
  useEffect(() => {
    const node = ref.current as HTMLElement | null;
    if (!enabled || !node?.addEventListener) return;
    const listener = (e: PointerEvent) => {
      if (e.button !== 0 && e.pointerType === 'mouse') return;
      const now = performance.now();
      const ts = e.timeStamp > 0 && e.timeStamp <= now && now - e.timeStamp < 1000 ? e.timeStamp : now;
      last.current = now;
      cb.current(performance.timeOrigin + ts);
    };
    node.addEventListener('pointerdown', listener);
    return () => node.removeEventListener('pointerdown', listener);
  }, [ref, enabled]);
  return { handledRecently: () => performance.now() - last.current < 1500 };
}
