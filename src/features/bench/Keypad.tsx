// Our own numeric keypad for a gloved finger: big keys, the value shown large above them, one confirm key.
// The keys stay mounted and memoised: a tap or a keystroke re-renders only what it changes.
import { memo } from 'react';
import { StyleSheet, View } from 'react-native';
import { colors, fonts, radius, space } from '../../theme/tokens';
import { Text } from '../../ui';
import { CONTAINED } from './contained';
import type { Key } from './keypad';
import { PadKey } from './PadKey';

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
        <KeyRow key={i} keys={row} onKey={onKey} />
      ))}
      <View style={styles.row}>
        {allowSign ? <KeyButton k="-" onKey={onKey} /> : null}
        <ConfirmKey label={confirmLabel} disabled={Boolean(confirmDisabled)} onConfirm={onConfirm} />
      </View>
    </View>
  );
});

const KeyRow = memo(function KeyRow({ keys, onKey }: { keys: readonly Key[]; onKey(key: Key): void }) {
  return (
    <View style={styles.row}>
      {keys.map((k) => (
        <KeyButton key={k} k={k} onKey={onKey} />
      ))}
    </View>
  );
});

const ConfirmKey = memo(function ConfirmKey({ label, disabled, onConfirm }: { label: string; disabled: boolean; onConfirm(): void }) {
  return (
    <PadKey accessibilityLabel={label} disabled={disabled} testID="key-confirm" onPress={onConfirm} style={[styles.key, styles.confirm, disabled && styles.disabled]} pressedStyle={styles.pressed}>
      <Text variant="heading" tone="inverse">
        {label}
      </Text>
    </PadKey>
  );
});

// One key. Memoised on a stable onKey, so typing re-renders the display, not the twelve keys.
const KeyButton = memo(function KeyButton({ k, onKey }: { k: Key; onKey(key: Key): void }) {
  const sign = k === '-';
  return (
    <PadKey
      accessibilityLabel={k === 'back' ? 'Delete last digit' : k === '.' ? 'Decimal point' : sign ? 'Change sign' : k}
      testID={`key-${k === '.' ? 'dot' : sign ? 'sign' : k}`}
      onPress={() => onKey(k)}
      style={[styles.key, (k === 'back' || sign) && styles.keyAlt, sign && styles.signKey]}
      pressedStyle={styles.pressed}
    >
      <Text style={styles.keyText}>{k === 'back' ? '⌫' : sign ? '±' : k}</Text>
    </PadKey>
  );
});

const styles = StyleSheet.create({
  pad: { gap: space.sm },
  row: { flexDirection: 'row', gap: space.sm },
  key: {
    flex: 1,
    height: 60,
    ...CONTAINED,
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
  confirm: { flex: 3, backgroundColor: colors.ok, borderColor: colors.ok, height: 64 },
  pressed: { opacity: 0.75 },
  disabled: { opacity: 0.45 },
});
