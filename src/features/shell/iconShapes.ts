// The drawing of the four section icons (our own line icons, 24 × 24), shared by icons.tsx (react-native-svg) and
// icons.web.tsx (the browser's own SVG elements, so the start-up download does not need react-native-svg).
export type SectionIconName = 'bench' | 'logbook' | 'calibrate' | 'lab';

export type Shape =
  | { kind: 'path'; d: string }
  | { kind: 'rect'; x: number; y: number; width: number; height: number; rx: number }
  | { kind: 'circle'; cx: number; cy: number; r: number };

export const ICON_SHAPES: Record<SectionIconName, Shape[]> = {
  // a burette tip over a falling drop
  bench: [
    { kind: 'path', d: 'M10 2h4v7l-2 3-2-3z' },
    { kind: 'path', d: 'M12 14.5c-1.6 2-2.5 3.4-2.5 4.6a2.5 2.5 0 0 0 5 0c0-1.2-.9-2.6-2.5-4.6z' },
  ],
  logbook: [
    { kind: 'rect', x: 4, y: 3, width: 16, height: 18, rx: 2 },
    { kind: 'path', d: 'M8 8h8M8 12h8M8 16h5' },
  ],
  // a graduated scale with a level mark
  calibrate: [
    { kind: 'path', d: 'M6 3v18M6 6h4M6 10h2.5M6 14h4M6 18h2.5' },
    { kind: 'path', d: 'M13 12h7M17 9l3 3-3 3' },
  ],
  lab: [
    { kind: 'circle', cx: 9, cy: 8, r: 3 },
    { kind: 'circle', cx: 17, cy: 9.5, r: 2.3 },
    { kind: 'path', d: 'M3.5 19c.6-3.2 2.8-5 5.5-5s4.9 1.8 5.5 5M14.5 14.6c2.6-.6 5.2.8 6 4.4' },
  ],
};

export const STROKE = { strokeWidth: 2, fill: 'none', strokeLinecap: 'round', strokeLinejoin: 'round' } as const;

export interface SectionIconProps {
  name: SectionIconName;
  color: string;
  size?: number;
}
