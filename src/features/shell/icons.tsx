import Svg, { Circle, Path, Rect } from 'react-native-svg';
import { ICON_SHAPES, STROKE, type SectionIconProps } from './iconShapes';

export type { SectionIconName } from './iconShapes';

/** Our own line icons, drawn for the four sections (shapes in iconShapes.ts; the web has icons.web.tsx). */
export function SectionIcon({ name, color, size = 26 }: SectionIconProps) {
  const p = { stroke: color, ...STROKE };
  return (
    <Svg width={size} height={size} viewBox="0 0 24 24" accessibilityElementsHidden importantForAccessibility="no">
      {ICON_SHAPES[name].map((s, i) =>
        s.kind === 'path' ? (
          <Path key={i} d={s.d} {...p} />
        ) : s.kind === 'rect' ? (
          <Rect key={i} x={s.x} y={s.y} width={s.width} height={s.height} rx={s.rx} {...p} />
        ) : (
          <Circle key={i} cx={s.cx} cy={s.cy} r={s.r} {...p} />
        ),
      )}
    </Svg>
  );
}
