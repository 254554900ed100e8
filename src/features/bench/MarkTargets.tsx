// The tap targets: one huge "reading" target and a smaller "checkpoint" one. The time is taken at the touch (see
// TapTarget: on the web the pointerdown event's own timestamp, so a busy main thread does not delay the mark).
import { memo } from 'react';
import { StyleSheet, View } from 'react-native';
import { colors, radius, space, touch } from '../../theme/tokens';
import { Text } from '../../ui';
import { TapTarget } from './TapTarget';

export const MarkTargets = memo(function MarkTargets({ disabled, onMark, layout }: { disabled: boolean; onMark(kind: 'reading' | 'checkpoint', monoMs: number): void; layout: 'phone' | 'wide' }) {
  return (
    <View style={styles.row}>
      <TapTarget
        accessibilityLabel="Mark a reading now"
        accessibilityHint="Takes the time at the touch; type the pH after"
        disabled={disabled}
        testID="tap-reading"
        onTap={(t) => onMark('reading', t)}
        style={[styles.big, layout === 'wide' && styles.bigWide, disabled && styles.disabled]}
        pressedStyle={styles.bigPressed}
      >
        <Text variant="display" tone="inverse">
          Mark
        </Text>
        <Text variant="label" tone="inverse">
          reading · time taken at the touch
        </Text>
      </TapTarget>
      <TapTarget
        accessibilityLabel="Mark a burette checkpoint now"
        disabled={disabled}
        testID="tap-checkpoint"
        onTap={(t) => onMark('checkpoint', t)}
        style={[styles.small, disabled && styles.disabled]}
        pressedStyle={styles.smallPressed}
      >
        <Text variant="heading" align="center">
          Burette
        </Text>
        <Text variant="caption" tone="muted" align="center">
          checkpoint
        </Text>
      </TapTarget>
    </View>
  );
});

const styles = StyleSheet.create({
  row: { flexDirection: 'row', gap: space.sm },
  big: {
    flex: 3,
    minHeight: touch.huge + 20,
    borderRadius: radius.lg,
    backgroundColor: colors.accent,
    alignItems: 'center',
    justifyContent: 'center',
    padding: space.md,
    gap: space.xs,
  },
  bigWide: { minHeight: 200 },
  bigPressed: { opacity: 0.85 },
  small: {
    flex: 1,
    minHeight: touch.huge + 20,
    borderRadius: radius.lg,
    borderWidth: 2,
    borderColor: colors.ink,
    backgroundColor: colors.surface,
    alignItems: 'center',
    justifyContent: 'center',
    padding: space.sm,
  },
  smallPressed: { backgroundColor: colors.sunken },
  disabled: { opacity: 0.4 },
});
