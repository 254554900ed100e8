// A key of the entry panel (the keypad's keys, the chips of waiting marks). Phone: a Pressable. Web: PadKey.web.tsx
// (native listeners, no press state to render).
import type { ReactNode } from 'react';
import { Pressable, type StyleProp, type ViewStyle } from 'react-native';

export interface PadKeyProps {
  /** Called when the tap completes (release on the key, or Enter / Space on the focused key). */
  onPress(): void;
  disabled?: boolean;
  /** A chosen one among several (the mark being typed for). */
  selected?: boolean;
  style: StyleProp<ViewStyle>;
  /** Added while pressed (phone); the web dims the key instead. */
  pressedStyle: StyleProp<ViewStyle>;
  accessibilityLabel: string;
  testID: string;
  children: ReactNode;
}

export function PadKey({ onPress, disabled = false, selected, style, pressedStyle, children, ...a11y }: PadKeyProps) {
  return (
    <Pressable accessibilityRole="button" accessibilityState={{ disabled, selected }} disabled={disabled} onPress={onPress} style={({ pressed }) => [style, pressed && pressedStyle]} {...a11y}>
      {children}
    </Pressable>
  );
}
