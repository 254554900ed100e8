// A plain line chart for titration data: one or two y axes, vertical and horizontal markers, points downsampled
// for drawing. Used live on the bench (kept cheap: no interaction state, no extra layers) and for the result plots;
// `interactive` turns on the crosshair read-out and zoom of ChartExplorer for the desk's report.
import { memo, useMemo, useState } from 'react';
import { View, type LayoutChangeEvent } from 'react-native';
import { ChartExplorer } from './ChartExplorer';
import { ChartPlot } from './ChartPlot';
import { makeScales } from './chartScales';
import type { ChartMarker, ChartSeries } from './chartTypes';
import { downsampleLTTB } from './downsample';

export type { ChartMarker, ChartSeries } from './chartTypes';

export interface LineChartProps {
  series: readonly ChartSeries[];
  xLabel: string;
  yLabel: string;
  yRightLabel?: string;
  markers?: readonly ChartMarker[];
  height?: number;
  /** Most points drawn per series; longer series are downsampled (LTTB). */
  maxPoints?: number;
  /** The whole x range (default: every point and vertical marker). */
  xDomain?: [number, number];
  yDomain?: [number, number];
  /** Spoken summary for screen readers. */
  summary: string;
  testID?: string;
  /**
   * Opt-in exploration (the desk's report): a crosshair reading the nearest point of each series under the pointer,
   * finger or arrow keys; zoom into an x range by dragging across it, with buttons or keys; reset to the whole range.
   */
  interactive?: boolean;
  /** Unit of x in the read-out, e.g. "mL". */
  xUnit?: string;
}

const NO_MARKERS: readonly ChartMarker[] = [];

export const LineChart = memo(function LineChart(props: LineChartProps) {
  return props.interactive ? <ChartExplorer {...props} /> : <StaticChart {...props} />;
});

function StaticChart({ series, xLabel, yLabel, yRightLabel, markers = NO_MARKERS, height = 260, maxPoints = 400, xDomain, yDomain, summary, testID }: LineChartProps) {
  const [width, setWidth] = useState(0);
  const onLayout = (e: LayoutChangeEvent) => setWidth(Math.round(e.nativeEvent.layout.width));
  const drawn = useMemo(() => series.map((s) => ({ ...s, points: downsampleLTTB(s.points, maxPoints) })), [series, maxPoints]);
  const scales = useMemo(() => makeScales({ width, height, series: drawn, markers, xDomain, yDomain }), [drawn, width, height, xDomain, yDomain, markers]);
  return (
    <View onLayout={onLayout} style={{ width: '100%', height }} accessible accessibilityRole="image" accessibilityLabel={summary} testID={testID}>
      {scales ? <ChartPlot width={width} height={height} series={drawn} scales={scales} markers={markers} xLabel={xLabel} yLabel={yLabel} yRightLabel={yRightLabel} /> : null}
    </View>
  );
}
