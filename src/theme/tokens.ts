/**
 * Halfmark's design tokens: the one place colours, spacing, type and breakpoints are defined.
 * Chosen for a bench under bright light, read at arm's length, touched with gloves: high contrast ink on warm paper,
 * an indicator-magenta accent (the colour a phenolphthalein end point turns), targets of at least 48 px.
 */
export const colors = {
  paper: '#FBFAF7',
  surface: '#FFFFFF',
  sunken: '#F1EEE7',
  ink: '#17161B',
  inkMuted: '#4A4853',
  inkFaint: '#6E6B76',
  line: '#D9D4CA',
  lineStrong: '#A9A398',
  accent: '#B0186A',
  accentInk: '#FFFFFF',
  accentSoft: '#F6DCEA',
  acid: '#C2410C',
  base: '#1D4ED8',
  ok: '#1E7B4F',
  okSoft: '#DCF1E6',
  warn: '#8A5100',
  warnSoft: '#FCEBCB',
  danger: '#B3261E',
  dangerSoft: '#F9DEDC',
  focus: '#1D4ED8',
  curve: '#17161B',
  derivative: '#B0186A',
  fit: '#1D4ED8',
  grid: '#E6E1D8',
} as const;

export const space = { xxs: 2, xs: 4, sm: 8, md: 12, lg: 16, xl: 24, xxl: 32, xxxl: 48 } as const;

export const radius = { sm: 6, md: 10, lg: 16, pill: 999 } as const;

/** Minimum touch target (gloved finger). */
export const touch = { min: 48, large: 64, huge: 120 } as const;

export const fonts = {
  regular: 'Inter_400Regular',
  semibold: 'Inter_600SemiBold',
  bold: 'Inter_700Bold',
} as const;

export const type = {
  caption: { fontSize: 13, lineHeight: 18, fontFamily: fonts.regular },
  body: { fontSize: 16, lineHeight: 24, fontFamily: fonts.regular },
  label: { fontSize: 15, lineHeight: 20, fontFamily: fonts.semibold },
  title: { fontSize: 22, lineHeight: 28, fontFamily: fonts.bold },
  heading: { fontSize: 18, lineHeight: 24, fontFamily: fonts.semibold },
  display: { fontSize: 44, lineHeight: 52, fontFamily: fonts.bold },
  clock: { fontSize: 64, lineHeight: 72, fontFamily: fonts.bold },
} as const;
export type TypeVariant = keyof typeof type;

/** Widths at which the layout changes. Below `wide` the phone layout (bottom bar); from `wide` the side rail. */
export const breakpoints = { medium: 600, wide: 900, desk: 1280 } as const;

export const theme = { colors, space, radius, touch, fonts, type, breakpoints } as const;
export type Theme = typeof theme;
