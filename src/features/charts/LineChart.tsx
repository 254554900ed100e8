// A plain line chart for titration data: one or two y axes, vertical and horizontal markers, points downsampled
// for drawing. Used live on the bench and for the result plots (curve, derivative, Gran); the desk can reuse it.
import { scaleLinear } from 'd3-scale';
import { line } from 'd3-shape';
import { memo, useMemo, useState } from 'react';
import { View, type LayoutChangeEvent } from 'react-native';
import Svg, { Circle, G, Line, Path, Rect, Text as SvgText } from 'react-native-svg';
import { colors, fonts } from '../../theme/tokens';
import { downsampleLTTB, type XY } from './downsample';

export interface ChartSeries {
  id: string;
  label: string;
  points: readonly XY[];
  color: string;
  axis?: 'left' | 'right';
  dashed?: boolean;
  /** Draw a dot per point (measured readings) as well as the line. */
  dots?: boolean;
  width?: number;
}

export interface ChartMarker {
  /** x for a vertical line, y for a horizontal one (on the left axis). */
  x?: number;
  y?: number;
  label: string;
  color?: string;
}

export interface LineChartProps {
  series: readonly ChartSeries[];
  xLabel: string;
  yLabel: string;
  yRightLabel?: string;
  markers?: readonly ChartMarker[];
  height?: number;
  /** Most points drawn per series; longer series are downsampled (LTTB). */
  maxPoints?: number;
  xDomain?: [number, number];
  yDomain?: [number, number];
  /** Spoken summary for screen readers. */
  summary: string;
  testID?: string;
}

const PAD = { left: 44, right: 44, top: 14, bottom: 40 };
const FONT = 12;

function extent(values: Iterable<number>): [number, number] | null {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values) {
    if (!Number.isFinite(v)) continue;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (lo === Infinity) return null;
  if (lo === hi) return [lo - 1, hi + 1];
  return [lo, hi];
}

export const LineChart = memo(function LineChart({
  series,
  xLabel,
  yLabel,
  yRightLabel,
  markers = [],
  height = 260,
  maxPoints = 400,
  xDomain,
  yDomain,
  summary,
  testID,
}: LineChartProps) {
  const [width, setWidth] = useState(0);
  const onLayout = (e: LayoutChangeEvent) => setWidth(Math.round(e.nativeEvent.layout.width));
  const hasRight = series.some((s) => s.axis === 'right');

  const drawn = useMemo(() => series.map((s) => ({ ...s, points: downsampleLTTB(s.points, maxPoints) })), [series, maxPoints]);

  const geom = useMemo(() => {
    if (width <= 0) return null;
    const all = drawn.flatMap((s) => s.points);
    const xs = xDomain ?? extent([...all.map((p) => p.x), ...markers.flatMap((m) => (m.x !== undefined ? [m.x] : []))]);
    const left = drawn.filter((s) => s.axis !== 'right').flatMap((s) => s.points);
    const right = drawn.filter((s) => s.axis === 'right').flatMap((s) => s.points);
    const ysL = yDomain ?? extent(left.map((p) => p.y));
    const ysR = extent(right.map((p) => p.y));
    if (!xs || !ysL) return null;
    const innerR = hasRight ? PAD.right : 16;
    const x = scaleLinear().domain(xs).range([PAD.left, width - innerR]).nice();
    const yL = scaleLinear().domain(ysL).range([height - PAD.bottom, PAD.top]).nice();
    const yR = ysR ? scaleLinear().domain(ysR).range([height - PAD.bottom, PAD.top]).nice() : null;
    const paths = drawn.map((s) => {
      const y = s.axis === 'right' && yR ? yR : yL;
      const d = line<XY>()
        .x((p) => x(p.x))
        .y((p) => y(p.y))
        .defined((p) => Number.isFinite(p.x) && Number.isFinite(p.y))(s.points as XY[]);
      return { s, d: d ?? '', y };
    });
    return { x, yL, yR, paths, innerR };
  }, [drawn, width, height, xDomain, yDomain, markers, hasRight]);

  return (
    <View onLayout={onLayout} style={{ width: '100%', height }} accessible accessibilityRole="image" accessibilityLabel={summary} testID={testID}>
      {geom ? (
        <Svg width={width} height={height}>
          <Rect x={0} y={0} width={width} height={height} fill={colors.surface} />
          {geom.yL.ticks(5).map((t) => (
            <G key={`yl${t}`}>
              <Line x1={PAD.left} x2={width - geom.innerR} y1={geom.yL(t)} y2={geom.yL(t)} stroke={colors.grid} strokeWidth={1} />
              <SvgText x={PAD.left - 6} y={geom.yL(t) + 4} fontSize={FONT} fill={colors.inkMuted} textAnchor="end" fontFamily={fonts.regular}>
                {String(t)}
              </SvgText>
            </G>
          ))}
          {geom.yR?.ticks(5).map((t) => (
            <SvgText key={`yr${t}`} x={width - geom.innerR + 6} y={geom.yR!(t) + 4} fontSize={FONT} fill={colors.derivative} fontFamily={fonts.regular}>
              {String(t)}
            </SvgText>
          ))}
          {geom.x.ticks(Math.max(2, Math.floor(width / 80))).map((t) => (
            <G key={`x${t}`}>
              <Line x1={geom.x(t)} x2={geom.x(t)} y1={PAD.top} y2={height - PAD.bottom} stroke={colors.grid} strokeWidth={1} />
              <SvgText x={geom.x(t)} y={height - PAD.bottom + 16} fontSize={FONT} fill={colors.inkMuted} textAnchor="middle" fontFamily={fonts.regular}>
                {String(t)}
              </SvgText>
            </G>
          ))}
          <Line x1={PAD.left} x2={width - geom.innerR} y1={height - PAD.bottom} y2={height - PAD.bottom} stroke={colors.lineStrong} strokeWidth={1.5} />
          <Line x1={PAD.left} x2={PAD.left} y1={PAD.top} y2={height - PAD.bottom} stroke={colors.lineStrong} strokeWidth={1.5} />
          {markers.map((m, i) =>
            m.x !== undefined ? (
              <G key={`m${i}`}>
                <Line x1={geom.x(m.x)} x2={geom.x(m.x)} y1={PAD.top} y2={height - PAD.bottom} stroke={m.color ?? colors.accent} strokeWidth={2} strokeDasharray="6 4" />
                <SvgText x={geom.x(m.x) + 4} y={PAD.top + 12 + i * 14} fontSize={FONT} fill={m.color ?? colors.accent} fontFamily={fonts.semibold}>
                  {m.label}
                </SvgText>
              </G>
            ) : m.y !== undefined ? (
              <G key={`m${i}`}>
                <Line x1={PAD.left} x2={width - geom.innerR} y1={geom.yL(m.y)} y2={geom.yL(m.y)} stroke={m.color ?? colors.fit} strokeWidth={1.5} strokeDasharray="3 3" />
                <SvgText x={PAD.left + 4} y={geom.yL(m.y) - 4} fontSize={FONT} fill={m.color ?? colors.fit} fontFamily={fonts.semibold}>
                  {m.label}
                </SvgText>
              </G>
            ) : null,
          )}
          {geom.paths.map(({ s, d, y }) => (
            <G key={s.id}>
              <Path d={d} stroke={s.color} strokeWidth={s.width ?? 2.5} fill="none" strokeDasharray={s.dashed ? '5 4' : undefined} />
              {s.dots && s.points.length <= 150
                ? s.points.map((p, i) => <Circle key={i} cx={geom.x(p.x)} cy={y(p.y)} r={3} fill={s.color} />)
                : null}
            </G>
          ))}
          <SvgText x={(PAD.left + width - geom.innerR) / 2} y={height - 6} fontSize={FONT + 1} fill={colors.ink} textAnchor="middle" fontFamily={fonts.semibold}>
            {xLabel}
          </SvgText>
          <SvgText x={12} y={PAD.top + (height - PAD.top - PAD.bottom) / 2} fontSize={FONT + 1} fill={colors.ink} textAnchor="middle" fontFamily={fonts.semibold} rotation={-90} origin={`12, ${PAD.top + (height - PAD.top - PAD.bottom) / 2}`}>
            {yLabel}
          </SvgText>
          {yRightLabel ? (
            <SvgText x={width - 10} y={PAD.top + (height - PAD.top - PAD.bottom) / 2} fontSize={FONT + 1} fill={colors.derivative} textAnchor="middle" fontFamily={fonts.semibold} rotation={90} origin={`${width - 10}, ${PAD.top + (height - PAD.top - PAD.bottom) / 2}`}>
              {yRightLabel}
            </SvgText>
          ) : null}
        </Svg>
      ) : null}
    </View>
  );
});
