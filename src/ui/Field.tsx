import { forwardRef, useId } from 'react';
import { StyleSheet, TextInput, View, type TextInputProps } from 'react-native';
import { colors, radius, space, touch, type as typeScale } from '../theme/tokens';
import { Text } from './Text';

export interface FieldProps extends Omit<TextInputProps, 'style'> {
  label: string;
  /** Unit shown after the input (mL, g, mol/L…). */
  unit?: string;
  hint?: string;
  error?: string | null;
}

export const Field = forwardRef<TextInput, FieldProps>(function Field({ label, unit, hint, error, ...rest }, ref) {
  const id = useId();
  return (
    <View style={styles.wrap}>
      <Text variant="label" nativeID={`${id}-label`}>
        {label}
      </Text>
      <View style={[styles.box, error ? styles.boxError : null]}>
        <TextInput
          ref={ref}
          accessibilityLabel={label}
          aria-labelledby={`${id}-label`}
          aria-invalid={error ? true : undefined}
          placeholderTextColor={colors.inkFaint}
          {...rest}
          style={styles.input}
        />
        {unit ? (
          <Text variant="label" tone="muted" style={styles.unit}>
            {unit}
          </Text>
        ) : null}
      </View>
      {error ? (
        <Text variant="caption" tone="danger" accessibilityRole="alert">
          {error}
        </Text>
      ) : hint ? (
        <Text variant="caption" tone="muted">
          {hint}
        </Text>
      ) : null}
    </View>
  );
});

const styles = StyleSheet.create({
  wrap: { gap: space.xs },
  box: {
    flexDirection: 'row',
    alignItems: 'center',
    minHeight: touch.min,
    borderWidth: 1.5,
    borderColor: colors.lineStrong,
    borderRadius: radius.md,
    backgroundColor: colors.surface,
    paddingHorizontal: space.md,
  },
  boxError: { borderColor: colors.danger },
  input: { ...typeScale.body, flex: 1, color: colors.ink, paddingVertical: space.sm, minWidth: 0 },
  unit: { marginLeft: space.sm },
});
