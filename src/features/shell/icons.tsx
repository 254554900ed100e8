import Svg, { Circle, Path, Rect } from 'react-native-svg';

export type SectionIconName = 'bench' | 'logbook' | 'calibrate' | 'lab';

/** Our own line icons, drawn for the four sections. */
export function SectionIcon({ name, color, size = 26 }: { name: SectionIconName; color: string; size?: number }) {
  const p = { stroke: color, strokeWidth: 2, fill: 'none', strokeLinecap: 'round' as const, strokeLinejoin: 'round' as const };
  return (
    <Svg width={size} height={size} viewBox="0 0 24 24" accessibilityElementsHidden importantForAccessibility="no">
      {name === 'bench' ? (
        <>
          {/* a burette tip over a falling drop */}
          <Path d="M10 2h4v7l-2 3-2-3z" {...p} />
          <Path d="M12 14.5c-1.6 2-2.5 3.4-2.5 4.6a2.5 2.5 0 0 0 5 0c0-1.2-.9-2.6-2.5-4.6z" {...p} />
        </>
      ) : null}
      {name === 'logbook' ? (
        <>
          <Rect x="4" y="3" width="16" height="18" rx="2" {...p} />
          <Path d="M8 8h8M8 12h8M8 16h5" {...p} />
        </>
      ) : null}
      {name === 'calibrate' ? (
        <>
          {/* a graduated scale with a level mark */}
          <Path d="M6 3v18M6 6h4M6 10h2.5M6 14h4M6 18h2.5" {...p} />
          <Path d="M13 12h7M17 9l3 3-3 3" {...p} />
        </>
      ) : null}
      {name === 'lab' ? (
        <>
          <Circle cx="9" cy="8" r="3" {...p} />
          <Circle cx="17" cy="9.5" r="2.3" {...p} />
          <Path d="M3.5 19c.6-3.2 2.8-5 5.5-5s4.9 1.8 5.5 5M14.5 14.6c2.6-.6 5.2.8 6 4.4" {...p} />
        </>
      ) : null}
    </Svg>
  );
}
