// The drawing of a LineChart: grid, axes, markers, lines and dots for scales already made. Memoised on its inputs,
// so a crosshair moving over it (drawn on a layer of its own) does not redraw it.
import { line } from 'd3-shape';
import { memo, useId } from 'react';
import Svg, { Circle, ClipPath, Defs, G, Line, Path, Rect, Text as SvgText } from 'react-native-svg';
import { colors, fonts } from '../../theme/tokens';
import type { ChartScales } from './chartScales';
import { PAD } from './chartScales';
import type { ChartMarker, ChartSeries } from './chartTypes';
import type { XY } from './downsample';

export const FONT = 12;

/** Most dots drawn per series; beyond that the line alone reads better (and draws faster). */
const MAX_DOTS = 150;

export interface ChartPlotProps {
  width: number;
  height: number;
  series: readonly ChartSeries[];
  scales: ChartScales;
  markers: readonly ChartMarker[];
  xLabel: string;
  yLabel: string;
  yRightLabel?: string;
  /** Clip lines, dots and markers to the plot area (a zoomed view has points outside it). */
  clip?: boolean;
}

export const ChartPlot = memo(function ChartPlot({ width, height, series, scales, markers, xLabel, yLabel, yRightLabel, clip }: ChartPlotProps) {
  const clipId = `plot${useId().replace(/[^A-Za-z0-9]/g, '')}`;
  const { x, yL, yR, innerR, padL } = scales;
  // The right axis speaks for the series drawn on it (the derivative on the bench, Gran after Ve on the report).
  const rightColor = series.find((s) => s.axis === 'right')?.color ?? colors.derivative;
  const [x0, x1] = x.domain();
  const plotH = height - PAD.top - PAD.bottom;
  const paths = series.map((s) => {
    const y = s.axis === 'right' && yR ? yR : yL;
    const d = line<XY>()
      .x((p) => x(p.x))
      .y((p) => y(p.y))
      .defined((p) => Number.isFinite(p.x) && Number.isFinite(p.y))(s.points as XY[]);
    return { s, d: d ?? '', y };
  });
  const shownMarkers = markers.filter((m) => m.x === undefined || (m.x >= x0 && m.x <= x1));
  return (
    <Svg width={width} height={height}>
      {clip ? (
        <Defs>
          <ClipPath id={clipId}>
            <Rect x={padL} y={PAD.top} width={Math.max(0, width - innerR - padL)} height={plotH} />
          </ClipPath>
        </Defs>
      ) : null}
      <ChartGrid
        gridKey={gridKeyOf(width, height, scales, rightColor, xLabel, yLabel, yRightLabel)}
        width={width}
        height={height}
        scales={scales}
        rightColor={rightColor}
        xLabel={xLabel}
        yLabel={yLabel}
        yRightLabel={yRightLabel}
      />
      <G clipPath={clip ? `url(#${clipId})` : undefined}>
        {shownMarkers.map((m, i) =>
          m.x !== undefined ? (
            <G key={`m${i}`}>
              <Line x1={x(m.x)} x2={x(m.x)} y1={PAD.top} y2={height - PAD.bottom} stroke={m.color ?? colors.accent} strokeWidth={2} strokeDasharray="6 4" />
              <SvgText x={x(m.x) + 4} y={PAD.top + 12 + i * 14} fontSize={FONT} fill={m.color ?? colors.accent} fontFamily={fonts.semibold}>
                {m.label}
              </SvgText>
            </G>
          ) : m.y !== undefined ? (
            <G key={`m${i}`}>
              <Line x1={padL} x2={width - innerR} y1={yL(m.y)} y2={yL(m.y)} stroke={m.color ?? colors.fit} strokeWidth={1.5} strokeDasharray="3 3" />
              <SvgText x={padL + 4} y={yL(m.y) - 4} fontSize={FONT} fill={m.color ?? colors.fit} fontFamily={fonts.semibold}>
                {m.label}
              </SvgText>
            </G>
          ) : null,
        )}
        {paths.map(({ s, d, y }) => (
          <G key={s.id}>
            <Path d={d} stroke={s.color} strokeWidth={s.width ?? 2.5} fill="none" strokeDasharray={s.dashed ? '5 4' : undefined} />
            {s.dots && s.points.length <= MAX_DOTS ? s.points.map((p, i) => <Circle key={i} cx={x(p.x)} cy={y(p.y)} r={3} fill={s.color} />) : null}
          </G>
        ))}
      </G>
    </Svg>
  );
});

/**
 * What the grid draws depends on these alone. A new reading on the bench rarely moves the rounded-out domains, so
 * the grid (some fifty SVG elements) is drawn again only when its ticks or size change, not with every reading.
 */
function gridKeyOf(width: number, height: number, scales: ChartScales, rightColor: string, xLabel: string, yLabel: string, yRightLabel?: string) {
  const { x, yL, yR, padL, innerR } = scales;
  return [width, height, padL, innerR, x.domain().join(), yL.domain().join(), yR ? yR.domain().join() : '', scales.yTicksL.map((t) => t.label).join(), scales.yTicksR.map((t) => t.label).join(), rightColor, xLabel, yLabel, yRightLabel ?? ''].join('|');
}

type ChartGridProps = { gridKey: string; width: number; height: number; scales: ChartScales; rightColor: string; xLabel: string; yLabel: string; yRightLabel?: string };

/** Background, grid lines, ticks, axes and axis titles. */
const ChartGrid = memo(
  function ChartGrid({ width, height, scales, rightColor, xLabel, yLabel, yRightLabel }: ChartGridProps) {
    const { x, yL, yR, innerR, padL } = scales;
    const plotH = height - PAD.top - PAD.bottom;
    const midY = PAD.top + plotH / 2;
    return (
      <G>
          <Rect x={0} y={0} width={width} height={height} fill={colors.surface} />
          {scales.yTicksL.map((t) => (
            <G key={`yl${t.value}`}>
              <Line x1={padL} x2={width - innerR} y1={yL(t.value)} y2={yL(t.value)} stroke={colors.grid} strokeWidth={1} />
              <SvgText x={padL - 6} y={yL(t.value) + 4} fontSize={FONT} fill={colors.inkMuted} textAnchor="end" fontFamily={fonts.regular}>
                {t.label}
              </SvgText>
            </G>
          ))}
          {yR
            ? scales.yTicksR.map((t) => (
                <SvgText key={`yr${t.value}`} x={width - innerR + 6} y={yR(t.value) + 4} fontSize={FONT} fill={rightColor} fontFamily={fonts.regular}>
                  {t.label}
                </SvgText>
              ))
            : null}
          {x.ticks(Math.max(2, Math.floor(width / 80))).map((t) => (
            <G key={`x${t}`}>
              <Line x1={x(t)} x2={x(t)} y1={PAD.top} y2={height - PAD.bottom} stroke={colors.grid} strokeWidth={1} />
              <SvgText x={x(t)} y={height - PAD.bottom + 16} fontSize={FONT} fill={colors.inkMuted} textAnchor="middle" fontFamily={fonts.regular}>
                {String(t)}
              </SvgText>
            </G>
          ))}
          <Line x1={padL} x2={width - innerR} y1={height - PAD.bottom} y2={height - PAD.bottom} stroke={colors.lineStrong} strokeWidth={1.5} />
          <Line x1={padL} x2={padL} y1={PAD.top} y2={height - PAD.bottom} stroke={colors.lineStrong} strokeWidth={1.5} />
          <SvgText x={(padL + width - innerR) / 2} y={height - 6} fontSize={FONT + 1} fill={colors.ink} textAnchor="middle" fontFamily={fonts.semibold}>
            {xLabel}
          </SvgText>
          <SvgText x={12} y={midY} fontSize={FONT + 1} fill={colors.ink} textAnchor="middle" fontFamily={fonts.semibold} rotation={-90} origin={`12, ${midY}`}>
            {yLabel}
          </SvgText>
          {yRightLabel ? (
            <SvgText x={width - 10} y={midY} fontSize={FONT + 1} fill={rightColor} textAnchor="middle" fontFamily={fonts.semibold} rotation={90} origin={`${width - 10}, ${midY}`}>
              {yRightLabel}
            </SvgText>
          ) : null}
      </G>
    );
  },
  (a, b) => a.gridKey === b.gridKey,
);
