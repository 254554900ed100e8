import { Text as RNText, type TextProps as RNTextProps } from 'react-native';
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
}

export function Text({ variant = 'body', tone = 'ink', numeric, align, style, ...rest }: TextProps) {
  return (
    <RNText
      {...rest}
      style={[
        typeScale[variant],
        { color: toneColor[tone] },
        numeric && { fontVariant: ['tabular-nums'] },
        align && { textAlign: align },
        style,
      ]}
    />
  );
}
