// Our own numeric keypad for a gloved finger: big keys, the value shown large above them, one confirm key.
import { memo } from 'react';
import { Pressable, StyleSheet, View } from 'react-native';
import { colors, fonts, radius, space } from '../../theme/tokens';
import { Text } from '../../ui';
import type { Key } from './keypad';

const ROWS: Key[][] = [
  ['7', '8', '9'],
  ['4', '5', '6'],
  ['1', '2', '3'],
  ['.', '0', 'back'],
];

export interface KeypadProps {
  onKey(key: Key): void;
  onConfirm(): void;
  confirmLabel: string;
  confirmDisabled?: boolean;
  /** mV values can be negative: a ± key replaces nothing, it sits beside confirm. */
  allowSign?: boolean;
}

export const Keypad = memo(function Keypad({ onKey, onConfirm, confirmLabel, confirmDisabled, allowSign }: KeypadProps) {
  return (
    <View style={styles.pad} testID="keypad">
      {ROWS.map((row, i) => (
        <View key={i} style={styles.row}>
          {row.map((k) => (
            <Pressable
              key={k}
              accessibilityRole="button"
              accessibilityLabel={k === 'back' ? 'Delete last digit' : k === '.' ? 'Decimal point' : k}
              testID={`key-${k === '.' ? 'dot' : k}`}
              onPress={() => onKey(k)}
              style={({ pressed }) => [styles.key, k === 'back' && styles.keyAlt, pressed && styles.pressed]}
            >
              <Text style={styles.keyText}>{k === 'back' ? '⌫' : k}</Text>
            </Pressable>
          ))}
        </View>
      ))}
      <View style={styles.row}>
        {allowSign ? (
          <Pressable accessibilityRole="button" accessibilityLabel="Change sign" testID="key-sign" onPress={() => onKey('-')} style={({ pressed }) => [styles.key, styles.keyAlt, styles.signKey, pressed && styles.pressed]}>
            <Text style={styles.keyText}>±</Text>
          </Pressable>
        ) : null}
        <Pressable
          accessibilityRole="button"
          accessibilityLabel={confirmLabel}
          accessibilityState={{ disabled: Boolean(confirmDisabled) }}
          disabled={confirmDisabled}
          testID="key-confirm"
          onPress={onConfirm}
          style={({ pressed }) => [styles.key, styles.confirm, pressed && styles.pressed, confirmDisabled && styles.disabled]}
        >
          <Text variant="heading" tone="inverse">
            {confirmLabel}
          </Text>
        </Pressable>
      </View>
    </View>
  );
});

const styles = StyleSheet.create({
  pad: { gap: space.sm },
  row: { flexDirection: 'row', gap: space.sm },
  key: {
    flex: 1,
    minHeight: 60,
    borderRadius: radius.md,
    backgroundColor: colors.surface,
    borderWidth: 1.5,
    borderColor: colors.lineStrong,
    alignItems: 'center',
    justifyContent: 'center',
  },
  keyAlt: { backgroundColor: colors.sunken },
  signKey: { flex: 0, minWidth: 80 },
  keyText: { fontSize: 28, lineHeight: 34, fontFamily: fonts.semibold, color: colors.ink },
  confirm: { flex: 3, backgroundColor: colors.ok, borderColor: colors.ok, minHeight: 64 },
  pressed: { opacity: 0.75 },
  disabled: { opacity: 0.45 },
});
