import { useWindowDimensions } from 'react-native';
import { breakpoints } from './tokens';

export type LayoutSize = 'phone' | 'medium' | 'wide';

export function layoutFor(width: number): LayoutSize {
  if (width >= breakpoints.wide) return 'wide';
  if (width >= breakpoints.medium) return 'medium';
  return 'phone';
}

export function useLayoutSize(): LayoutSize {
  return layoutFor(useWindowDimensions().width);
}
