// Whether a view is on screen, from an IntersectionObserver; true until the first answer and where there is no
// observer.
import { useEffect, useState } from 'react';
import type { View } from 'react-native';

/** `view`: the view's element as set by a callback ref (state), so a view mounted later is watched too. */
export function useOnScreen(view: View | null): boolean {
  const [on, setOn] = useState(true);
  useEffect(() => {
    const node = view as unknown as Element | null;
    if (!node || typeof IntersectionObserver === 'undefined') return;
    const io = new IntersectionObserver((entries) => setOn(entries[entries.length - 1].isIntersecting));
    io.observe(node);
    return () => io.disconnect();
  }, [view]);
  return on;
}
