import type { ReactNode } from 'react';
import { StyleSheet, View, type ViewProps } from 'react-native';
import { colors, radius, space } from '../theme/tokens';
import { Text } from './Text';

export interface CardProps extends ViewProps {
  title?: string;
  /** Right side of the title row (a badge, a button). */
  aside?: ReactNode;
  tone?: 'plain' | 'accent' | 'warn' | 'danger' | 'ok';
  children?: ReactNode;
}

const toneStyle = {
  plain: { backgroundColor: colors.surface, borderColor: colors.line },
  accent: { backgroundColor: colors.accentSoft, borderColor: colors.accent },
  warn: { backgroundColor: colors.warnSoft, borderColor: colors.warn },
  danger: { backgroundColor: colors.dangerSoft, borderColor: colors.danger },
  ok: { backgroundColor: colors.okSoft, borderColor: colors.ok },
} as const;

export function Card({ title, aside, tone = 'plain', children, style, ...rest }: CardProps) {
  return (
    <View {...rest} style={[styles.card, toneStyle[tone], style]}>
      {title || aside ? (
        <View style={styles.head}>
          {title ? (
            <Text variant="heading" accessibilityRole="header" style={styles.title}>
              {title}
            </Text>
          ) : null}
          {aside}
        </View>
      ) : null}
      {children}
    </View>
  );
}

const styles = StyleSheet.create({
  card: { borderWidth: 1, borderRadius: radius.lg, padding: space.lg, gap: space.md },
  head: { flexDirection: 'row', alignItems: 'center', justifyContent: 'space-between', gap: space.md },
  title: { flexShrink: 1 },
});
