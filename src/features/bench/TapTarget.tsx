// A tap target that gives the instant of the touch. Phone: Pressable's onPressIn is the touch-down.
// Web: TapTarget.web.tsx (a native pointerdown listener, no press state to re-render).
import type { ReactNode } from 'react';
import { Pressable, type StyleProp, type ViewStyle } from 'react-native';
import { monoNow } from './clockSource';

export interface TapTargetProps {
  /** Called with the instant of the touch on the run clock's timeline (see clockSource.ts). */
  onTap(monoMs: number): void;
  disabled: boolean;
  style: StyleProp<ViewStyle>;
  /** Added while pressed (phone); the web dims the target instead. */
  pressedStyle: StyleProp<ViewStyle>;
  accessibilityLabel: string;
  accessibilityHint?: string;
  testID: string;
  children: ReactNode;
}

export function TapTarget({ onTap, disabled, style, pressedStyle, children, ...a11y }: TapTargetProps) {
  return (
    <Pressable accessibilityRole="button" accessibilityState={{ disabled }} disabled={disabled} onPressIn={() => onTap(monoNow())} style={({ pressed }) => [style, pressed && pressedStyle]} {...a11y}>
      {children}
    </Pressable>
  );
}
