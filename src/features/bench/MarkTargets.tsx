// The tap targets: one huge "reading" target and a smaller "checkpoint" one. The time is taken at pointer-down —
// from the event's own timestamp when the browser gives one, so a busy main thread does not delay the mark.
import { memo, useRef } from 'react';
import { Platform, Pressable, StyleSheet, View } from 'react-native';
import { colors, radius, space, touch } from '../../theme/tokens';
import { Text } from '../../ui';
import { monoNow } from './clockSource';
import { usePointerDown } from './pointerDown';

export const MarkTargets = memo(function MarkTargets({ disabled, onMark, layout }: { disabled: boolean; onMark(kind: 'reading' | 'checkpoint', monoMs: number): void; layout: 'phone' | 'wide' }) {
  const readingRef = useRef<View>(null);
  const checkpointRef = useRef<View>(null);
  const readingDown = usePointerDown(readingRef, (t) => onMark('reading', t), !disabled);
  const checkpointDown = usePointerDown(checkpointRef, (t) => onMark('checkpoint', t), !disabled);
  const web = Platform.OS === 'web';
  // Web: the pointerdown listener marks; onPress only serves the keyboard (Enter/Space), never a pointer twice.
  // Phone: onPressIn is the touch-down.
  const handlers = (kind: 'reading' | 'checkpoint', down: { handledRecently(): boolean }) =>
    web ? { onPress: () => !down.handledRecently() && onMark(kind, monoNow()) } : { onPressIn: () => onMark(kind, monoNow()) };
  return (
    <View style={styles.row}>
      <Pressable
        accessibilityRole="button"
        accessibilityLabel="Mark a reading now"
        accessibilityHint="Takes the time at the touch; type the pH after"
        accessibilityState={{ disabled }}
        disabled={disabled}
        testID="tap-reading"
        ref={readingRef}
        {...handlers('reading', readingDown)}
        style={({ pressed }) => [styles.big, layout === 'wide' && styles.bigWide, pressed && styles.bigPressed, disabled && styles.disabled]}
      >
        <Text variant="display" tone="inverse">
          Mark
        </Text>
        <Text variant="label" tone="inverse">
          reading · time taken at the touch
        </Text>
      </Pressable>
      <Pressable
        accessibilityRole="button"
        accessibilityLabel="Mark a burette checkpoint now"
        accessibilityState={{ disabled }}
        disabled={disabled}
        testID="tap-checkpoint"
        ref={checkpointRef}
        {...handlers('checkpoint', checkpointDown)}
        style={({ pressed }) => [styles.small, pressed && styles.smallPressed, disabled && styles.disabled]}
      >
        <Text variant="heading" align="center">
          Burette
        </Text>
        <Text variant="caption" tone="muted" align="center">
          checkpoint
        </Text>
      </Pressable>
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
