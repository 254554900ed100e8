import { StyleSheet, View } from 'react-native';
import { colors, fonts, radius, space } from '../theme/tokens';
import { Text } from './Text';

export type BadgeTone = 'neutral' | 'accent' | 'ok' | 'warn' | 'danger';

const tones: Record<BadgeTone, { bg: string; fg: 'ink' | 'accent' | 'ok' | 'warn' | 'danger' }> = {
  neutral: { bg: colors.sunken, fg: 'ink' },
  accent: { bg: colors.accentSoft, fg: 'accent' },
  ok: { bg: colors.okSoft, fg: 'ok' },
  warn: { bg: colors.warnSoft, fg: 'warn' },
  danger: { bg: colors.dangerSoft, fg: 'danger' },
};

export function Badge({ label, tone = 'neutral', testID }: { label: string; tone?: BadgeTone; testID?: string }) {
  const t = tones[tone];
  return (
    <View style={[styles.badge, { backgroundColor: t.bg }]} testID={testID}>
      <Text variant="caption" tone={t.fg} style={styles.text}>
        {label}
      </Text>
    </View>
  );
}

const styles = StyleSheet.create({
  badge: { borderRadius: radius.pill, paddingHorizontal: space.md, paddingVertical: space.xxs, alignSelf: 'flex-start' },
  text: { fontFamily: fonts.semibold },
});
