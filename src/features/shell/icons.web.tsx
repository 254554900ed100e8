import { ICON_SHAPES, STROKE, type SectionIconProps } from './iconShapes';

export type { SectionIconName } from './iconShapes';

/**
 * The section icons in the browser's own SVG elements: the navigation is on the first screen, and drawing four
 * icons does not need react-native-svg (the charts load it with their screens).
 */
export function SectionIcon({ name, color, size = 26 }: SectionIconProps) {
  return (
    <svg width={size} height={size} viewBox="0 0 24 24" aria-hidden="true" focusable="false" style={{ flexShrink: 0 }}>
      <g stroke={color} strokeWidth={STROKE.strokeWidth} fill={STROKE.fill} strokeLinecap={STROKE.strokeLinecap} strokeLinejoin={STROKE.strokeLinejoin}>
        {ICON_SHAPES[name].map((s, i) =>
          s.kind === 'path' ? (
            <path key={i} d={s.d} />
          ) : s.kind === 'rect' ? (
            <rect key={i} x={s.x} y={s.y} width={s.width} height={s.height} rx={s.rx} />
          ) : (
            <circle key={i} cx={s.cx} cy={s.cy} r={s.r} />
          ),
        )}
      </g>
    </svg>
  );
}
