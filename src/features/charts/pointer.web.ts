// Where a pointer is across the chart in the browser: measured from the layer's box, since offsetX is relative to
// whatever element was hit.
import type { PointerEvent } from 'react-native';

export function pointerX(e: PointerEvent): number {
  const el = e.currentTarget as unknown as HTMLElement;
  return (e.nativeEvent as unknown as MouseEvent).clientX - el.getBoundingClientRect().left;
}

/** Keeps a drag's moves coming to the chart after the pointer leaves it, so a selection can run past the edge. */
export function capturePointer(e: PointerEvent): void {
  const el = e.currentTarget as unknown as HTMLElement;
  try {
    el.setPointerCapture?.(e.nativeEvent.pointerId);
  } catch {
    // A pointer that is already gone cannot be captured; the drag then ends at the edge.
  }
}
