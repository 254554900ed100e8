// A key of the entry panel on the web: native click and key listeners (pressTarget.web.ts) instead of Pressable.
// Pressable keeps hover, focus and pressed state in React, so each tap on a key rendered it two or three more times
// (press in, press out, hover), work that lands between the finger and the frame that shows the digit or the saved
// reading. A tap does not move the focus to the key; Tab still reaches every key.
import { View } from 'react-native';
import type { PadKeyProps } from './PadKey';
import { usePressTarget } from './pressTarget.web';

export type { PadKeyProps } from './PadKey';

export function PadKey({ onPress, disabled = false, selected, style, pressedStyle: _phoneOnly, children, ...a11y }: PadKeyProps) {
  // A click is a completed tap: pressed and released on the key (sliding off cancels it).
  const ref = usePressTarget(disabled, { pressedOpacity: '0.75', onClick: onPress, onKey: onPress });
  return (
    // Focusable even while disabled (announced as disabled, presses ignored): taking the tabindex away from a key
    // that has the focus made the browser lay out the page there and then, inside the tap that disabled it.
    <View ref={ref} accessibilityRole="button" accessibilityState={{ disabled, selected }} focusable style={style} {...a11y}>
      {children}
    </View>
  );
}
