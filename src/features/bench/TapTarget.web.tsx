// The tap target on the web: a native pointerdown listener (pressTarget.web.ts), the earliest moment the page hears
// of a touch. Its event.timeStamp is when the browser received it (the same timeline as performance.now()), so a
// busy main thread does not shift the mark. No Pressable: its press and focus state would re-render the target
// twice more on every tap, work that sits between the touch and the frame that shows the mark.
import { View } from 'react-native';
import { monoNow } from './clockSource';
import { usePressTarget } from './pressTarget.web';
import type { TapTargetProps } from './TapTarget';

export type { TapTargetProps } from './TapTarget';

export function TapTarget({ onTap, disabled, style, pressedStyle: _phoneOnly, children, ...a11y }: TapTargetProps) {
  const ref = usePressTarget(disabled, {
    pressedOpacity: '0.8',
    onDown: (e) => {
      const now = performance.now();
      const ts = e.timeStamp > 0 && e.timeStamp <= now && now - e.timeStamp < 1000 ? e.timeStamp : now;
      onTap(performance.timeOrigin + ts);
    },
    onKey: () => onTap(monoNow()),
  });
  return (
    <View ref={ref} accessibilityRole="button" accessibilityState={{ disabled }} focusable={!disabled} style={style} {...a11y}>
      {children}
    </View>
  );
}
