import type { FontSource } from 'expo-font';
import { fonts } from '../theme/tokens';

/** Fonts ship in assets/fonts, so the page draws its own type offline (fonts.ts, fonts.web.ts load them). */
export const FONT_FILES: Record<string, FontSource> = {
  [fonts.regular]: require('../../assets/fonts/Inter_400Regular.ttf'),
  [fonts.semibold]: require('../../assets/fonts/Inter_600SemiBold.ttf'),
  [fonts.bold]: require('../../assets/fonts/Inter_700Bold.ttf'),
};
