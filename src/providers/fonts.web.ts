import { useEffect, useState } from 'react';
import { FONT_FILES } from './fontFiles';

// In a web export a font file's require() is its URL, and every browser we support has the FontFace API: the fonts
// load without expo-font (and the asset and font-watching code it brings to the first screen).
let loading: Promise<void> | null = null;

function loadFonts(): Promise<void> {
  loading ??= Promise.all(
    Object.entries(FONT_FILES).map(([family, source]) => {
      const url = typeof source === 'string' ? source : source && typeof source === 'object' && 'uri' in source ? source.uri : null;
      if (!url) return Promise.reject(new Error(`no URL for the font ${family}`));
      const face = new FontFace(family, `url(${JSON.stringify(url)})`);
      document.fonts.add(face);
      return face.load();
    }),
  ).then(() => undefined);
  return loading;
}

/** True once the app's fonts are ready (or could not be loaded: the app then draws in the system font). */
export function useAppFonts(): boolean {
  const [done, setDone] = useState(false);
  useEffect(() => {
    let live = true;
    loadFonts()
      .catch((err) => console.warn('Fonts could not be loaded; using the system font.', err))
      .finally(() => live && setDone(true));
    return () => {
      live = false;
    };
  }, []);
  return done;
}
