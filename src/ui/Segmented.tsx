import { Pressable, StyleSheet, View } from 'react-native';
import { colors, fonts, radius, space, touch } from '../theme/tokens';
import { Text } from './Text';

export interface SegmentedProps<K extends string> {
  label: string;
  options: readonly { key: K; label: string }[];
  value: K;
  onChange(key: K): void;
  testID?: string;
}

/** A choice of two to four options, each a full-height touch target (pH or mV, and the like). */
export function Segmented<K extends string>({ label, options, value, onChange, testID }: SegmentedProps<K>) {
  return (
    <View style={styles.row} accessibilityRole="radiogroup" aria-label={label} testID={testID}>
      {options.map((o) => {
        const on = o.key === value;
        return (
          <Pressable
            key={o.key}
            accessibilityRole="radio"
            accessibilityState={{ checked: on }}
            aria-checked={on}
            accessibilityLabel={o.label}
            onPress={() => onChange(o.key)}
            testID={testID ? `${testID}-${o.key}` : undefined}
            style={[styles.item, on && styles.itemOn]}
          >
            <Text variant="label" tone={on ? 'inverse' : 'ink'} style={on ? styles.textOn : undefined}>
              {o.label}
            </Text>
          </Pressable>
        );
      })}
    </View>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', borderWidth: 1.5, borderColor: colors.lineStrong, borderRadius: radius.md, overflow: 'hidden', alignSelf: 'flex-start' },
  item: { minHeight: touch.min, minWidth: 64, paddingHorizontal: space.lg, alignItems: 'center', justifyContent: 'center', backgroundColor: colors.surface },
  itemOn: { backgroundColor: colors.ink },
  textOn: { fontFamily: fonts.bold },
});
