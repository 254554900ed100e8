// The big elapsed-time display (phone). It ticks on its own (10 Hz) so the rest of the bench does not re-render with
// it. Web: ClockDisplay.web.tsx writes the tick into the element without a render.
import { memo, useEffect, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { Text } from '../../ui';
import { elapsedS, formatClock, type ClockEvent, type ClockStatus } from './clock';
import { monoNow } from './clockSource';

export const ClockDisplay = memo(function ClockDisplay({ events, status }: { events: readonly ClockEvent[]; status: ClockStatus }) {
  const [now, setNow] = useState(() => monoNow());
  useEffect(() => {
    setNow(monoNow());
    if (status !== 'running') return;
    const id = setInterval(() => setNow(monoNow()), 100);
    return () => clearInterval(id);
  }, [status, events]);
  const t = elapsedS(events, now);
  return (
    <View style={styles.wrap}>
      <Text variant="clock" numeric align="center" testID="run-clock" accessibilityRole="timer" aria-live="off" accessibilityLabel={`Run time ${formatClock(t)}`}>
        {formatClock(t)}
      </Text>
    </View>
  );
});

const styles = StyleSheet.create({ wrap: { alignItems: 'center' } });
