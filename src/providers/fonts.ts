import { useFonts } from 'expo-font';
import { FONT_FILES } from './fontFiles';

/** True once the app's fonts are ready (or could not be loaded: the app then draws in the system font). */
export function useAppFonts(): boolean {
  const [loaded, error] = useFonts(FONT_FILES);
  return loaded || Boolean(error);
}
