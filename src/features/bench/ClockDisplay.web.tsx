// The big elapsed-time display on the web. React renders the element once per clock change (start, pause…); the
// 10 Hz tick writes the text into it directly. A React render per tick cost a render and a commit ten times a
// second, and a tap arriving meanwhile waited for them. The box has a fixed height and is laid out on its own
// (contain: strict, in a block parent: see contained.ts), so a tick re-measures the clock, not the page. Phone: ClockDisplay.tsx.
import { memo, useLayoutEffect, useRef } from 'react';
import { StyleSheet, View, type Text as RNText } from 'react-native';
import { type as typeScale } from '../../theme/tokens';
import { Text } from '../../ui';
import { elapsedS, formatClock, type ClockEvent, type ClockStatus } from './clock';
import { monoNow } from './clockSource';
import { CONTAINED, ISLAND_PARENT } from './contained';

export const ClockDisplay = memo(function ClockDisplay({ events, status }: { events: readonly ClockEvent[]; status: ClockStatus }) {
  const ref = useRef<RNText>(null);
  // Before the first paint: the element is never shown empty.
  useLayoutEffect(() => {
    const node = ref.current as unknown as HTMLElement | null;
    if (!node) return;
    let shown = '';
    const write = () => {
      const text = formatClock(elapsedS(events, monoNow()));
      if (text === shown) return;
      shown = text;
      node.textContent = text;
      node.setAttribute('aria-label', `Run time ${text}`);
    };
    write();
    if (status !== 'running') return;
    const id = setInterval(write, 100);
    return () => clearInterval(id);
  }, [status, events]);
  return (
    <View style={ISLAND_PARENT}>
      <View style={styles.wrap}>
        <Text ref={ref} variant="clock" numeric align="center" testID="run-clock" accessibilityRole="timer" aria-live="off" />
      </View>
    </View>
  );
});

const styles = StyleSheet.create({ wrap: { alignItems: 'center', height: typeScale.clock.lineHeight, ...CONTAINED } });
