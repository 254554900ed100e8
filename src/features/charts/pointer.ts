// Where a pointer is across the chart, native side: the event's offset is relative to the view that received it
// (the chart's event layer, which has no children).
import type { PointerEvent } from 'react-native';

export const pointerX = (e: PointerEvent): number => e.nativeEvent.offsetX;

/** Keeps a drag's moves coming to the chart after it leaves it (nothing to do on native). */
export const capturePointer = (_e: PointerEvent): void => {};
