import type { ReactNode } from 'react';
import { ActivityIndicator, Pressable, StyleSheet, View, type PressableProps } from 'react-native';
import { colors, radius, space, touch } from '../theme/tokens';
import { Text } from './Text';

export type ButtonKind = 'primary' | 'secondary' | 'quiet' | 'danger';

export interface ButtonProps extends Omit<PressableProps, 'children' | 'style'> {
  label: string;
  kind?: ButtonKind;
  size?: 'normal' | 'large';
  icon?: ReactNode;
  busy?: boolean;
  wide?: boolean;
}

const look: Record<ButtonKind, { bg: string; fg: 'inverse' | 'ink' | 'accent' | 'danger'; border: string }> = {
  primary: { bg: colors.accent, fg: 'inverse', border: colors.accent },
  secondary: { bg: colors.surface, fg: 'ink', border: colors.lineStrong },
  quiet: { bg: 'transparent', fg: 'accent', border: 'transparent' },
  danger: { bg: colors.danger, fg: 'inverse', border: colors.danger },
};

export function Button({ label, kind = 'primary', size = 'normal', icon, busy, wide, disabled, ...rest }: ButtonProps) {
  const l = look[kind];
  const off = disabled || busy;
  return (
    <Pressable
      accessibilityRole="button"
      accessibilityLabel={label}
      accessibilityState={{ disabled: Boolean(off), busy: Boolean(busy) }}
      disabled={off}
      {...rest}
      style={({ pressed }) => [
        styles.base,
        size === 'large' && styles.large,
        wide && styles.wide,
        { backgroundColor: l.bg, borderColor: l.border },
        pressed && styles.pressed,
        off && styles.disabled,
      ]}
    >
      <View style={styles.row}>
        {busy ? <ActivityIndicator color={kind === 'primary' || kind === 'danger' ? colors.accentInk : colors.accent} /> : icon}
        <Text variant={size === 'large' ? 'heading' : 'label'} tone={l.fg}>
          {label}
        </Text>
      </View>
    </Pressable>
  );
}

const styles = StyleSheet.create({
  base: {
    minHeight: touch.min,
    minWidth: touch.min,
    paddingHorizontal: space.lg,
    borderRadius: radius.md,
    borderWidth: 1.5,
    alignItems: 'center',
    justifyContent: 'center',
  },
  large: { minHeight: touch.large, paddingHorizontal: space.xl },
  wide: { alignSelf: 'stretch' },
  row: { flexDirection: 'row', alignItems: 'center', gap: space.sm },
  pressed: { opacity: 0.82, transform: [{ scale: 0.99 }] },
  disabled: { opacity: 0.45 },
});
