import type { Ref } from 'react';
import { Text as RNText, StyleSheet, type TextProps as RNTextProps } from 'react-native';
import { colors, type TypeVariant, type as typeScale } from '../theme/tokens';

export type Tone = 'ink' | 'muted' | 'faint' | 'accent' | 'ok' | 'warn' | 'danger' | 'inverse';

const toneColor: Record<Tone, string> = {
  ink: colors.ink,
  muted: colors.inkMuted,
  faint: colors.inkFaint,
  accent: colors.accent,
  ok: colors.ok,
  warn: colors.warn,
  danger: colors.danger,
  inverse: colors.accentInk,
};

export interface TextProps extends RNTextProps {
  variant?: TypeVariant;
  tone?: Tone;
  /** Figures in columns line up (readings, volumes, clock). */
  numeric?: boolean;
  align?: 'left' | 'center' | 'right';
  /** The element, for the few places that write to it directly (the run clock on the web). */
  ref?: Ref<RNText>;
}

// Registered once (not a fresh object per render): react-native-web resolves registered styles to class names it
// caches, where an inline object is converted to CSS again on every render of every Text.
const toneStyles = StyleSheet.create(Object.fromEntries(Object.entries(toneColor).map(([t, color]) => [t, { color }])) as Record<Tone, { color: string }>);
const variants = StyleSheet.create(typeScale);
const extra = StyleSheet.create({
  numeric: { fontVariant: ['tabular-nums'] },
  left: { textAlign: 'left' },
  center: { textAlign: 'center' },
  right: { textAlign: 'right' },
});

export function Text({ variant = 'body', tone = 'ink', numeric, align, style, ...rest }: TextProps) {
  return <RNText {...rest} style={[variants[variant], toneStyles[tone], numeric && extra.numeric, align && extra[align], style]} />;
}
