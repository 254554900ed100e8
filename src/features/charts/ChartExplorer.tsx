// LineChart with `interactive`: a crosshair that reads the nearest point of each series, and zoom on x.
// - pointer: hover (mouse) or touch and slide (finger) moves the crosshair; dragging across with a mouse zooms into
//   that range; the page still scrolls vertically under a finger (touch-action pan-y);
// - keys (the chart is a focusable slider): ← → step through the points (Shift or PageUp/PageDown: ten), Home/End,
//   + and − zoom around the crosshair, 0 shows the whole range, Escape hides the crosshair;
// - buttons below for zoom in/out, whole range and moving a zoomed view, sized for a gloved finger.
// The read-out is text under the plot and the slider's value text, so screen readers hear it.
import { useMemo, useState } from 'react';
import { StyleSheet, View, type AccessibilityActionEvent, type LayoutChangeEvent, type PointerEvent } from 'react-native';
import Svg, { Circle, Line, Rect, Text as SvgText } from 'react-native-svg';
import { useLayoutSize } from '../../theme/layout';
import { colors, fonts, radius, space } from '../../theme/tokens';
import { Button, Text } from '../../ui';
import {
  clampDomain,
  ensureVisible,
  isWhole,
  nearestByX,
  nearestStop,
  orderByX,
  panBy,
  readoutNumber,
  selectionDomain,
  stepStop,
  visiblePoints,
  xStops,
  yExtentIn,
  zoomAt,
  type Domain,
} from './chartGeometry';
import { ChartPlot, FONT } from './ChartPlot';
import { fullXDomain, makeScales, PAD } from './chartScales';
import type { ChartMarker, ChartSeries } from './chartTypes';
import { downsampleLTTB } from './downsample';
import type { LineChartProps } from './LineChart';
import { capturePointer, pointerX } from './pointer';

const NO_MARKERS: readonly ChartMarker[] = [];
const HINT = 'Point at the plot, or touch and slide along it, to read values. With a mouse, drag across it to zoom in. Keys: ← → step through points, + − zoom, 0 whole range.';
const HINT_PHONE = 'Touch and slide along the plot to read values.';

interface Reading {
  series: ChartSeries;
  x: number;
  y: number;
}

export function ChartExplorer({ series, xLabel, yLabel, yRightLabel, markers = NO_MARKERS, height = 260, maxPoints = 400, xDomain, yDomain, summary, testID, xUnit = '' }: LineChartProps) {
  const [width, setWidth] = useState(0);
  const [zoom, setZoom] = useState<Domain | null>(null);
  /** The x of the point the crosshair is on (a value, not an index, so it survives new readings arriving). */
  const [cursorX, setCursorX] = useState<number | null>(null);
  const [drag, setDrag] = useState<{ from: number; to: number } | null>(null);
  const [focused, setFocused] = useState(false);
  const phone = useLayoutSize() === 'phone';

  const full = useMemo<Domain | null>(() => xDomain ?? fullXDomain(series, markers), [xDomain, series, markers]);
  const view: Domain | null = full && zoom ? clampDomain(zoom, full) : full;
  const zoomed = Boolean(full && view && zoom && !isWhole(view, full));
  const v0 = view?.[0];
  const v1 = view?.[1];

  const orders = useMemo(() => series.map((s) => orderByX(s.points)), [series]);
  const stops = useMemo(() => xStops(series.map((s) => s.points)), [series]);

  const drawn = useMemo(
    () => series.map((s) => ({ ...s, points: downsampleLTTB(zoomed ? visiblePoints(s.points, [v0!, v1!]) : s.points, maxPoints) })),
    [series, zoomed, v0, v1, maxPoints],
  );
  const scales = useMemo(() => {
    if (!zoomed) return makeScales({ width, height, series: drawn, markers, xDomain, yDomain });
    const d: Domain = [v0!, v1!];
    const left = series.filter((s) => s.axis !== 'right').map((s) => s.points);
    const right = series.filter((s) => s.axis === 'right').map((s) => s.points);
    return makeScales({
      width,
      height,
      series: drawn,
      markers,
      xDomain: d,
      yDomain: yDomain ?? yExtentIn(left, d) ?? undefined,
      yRightDomain: right.length ? (yExtentIn(right, d) ?? undefined) : undefined,
      exactX: true,
    });
  }, [zoomed, width, height, drawn, markers, xDomain, yDomain, series, v0, v1]);

  const inView = (x: number) => !view || (x >= view[0] && x <= view[1]);
  const stopIndex = cursorX === null ? -1 : nearestStop(stops, cursorX);
  const readings: Reading[] = [];
  if (stopIndex >= 0) {
    const cx = stops[stopIndex];
    series.forEach((s, i) => {
      const j = nearestByX(s.points, orders[i], cx);
      if (j >= 0 && inView(s.points[j].x)) readings.push({ series: s, x: s.points[j].x, y: s.points[j].y });
    });
  }
  const unit = xUnit ? ` ${xUnit}` : '';
  const lines = readings.map((r) => `${r.series.label} ${readoutNumber(r.y)} at ${readoutNumber(r.x)}${unit}`);

  // ---- actions ----
  const anchor = () => (stopIndex >= 0 && inView(stops[stopIndex]) ? stops[stopIndex] : undefined);
  const setView = (d: Domain | null) => setZoom(d && full && !isWhole(d, full) ? d : null);
  const zoomIn = () => view && full && setView(zoomAt(view, full, 0.5, anchor()));
  const zoomOut = () => view && full && setView(zoomAt(view, full, 2, anchor()));
  const pan = (dir: number) => view && full && setView(panBy(view, full, dir * 0.5));
  const moveTo = (index: number) => {
    if (index < 0) return;
    const x = stops[index];
    setCursorX(x);
    if (zoomed && view && full) setView(ensureVisible(view, full, x));
  };
  const step = (delta: number) => {
    if (!stops.length) return;
    if (stopIndex >= 0 && inView(stops[stopIndex])) return moveTo(stepStop(stops.length, stopIndex, delta));
    // Nothing chosen in view yet: start at the edge of the view the step goes from.
    moveTo(view ? nearestStop(stops, delta > 0 ? view[0] : view[1]) : stepStop(stops.length, -1, delta));
  };

  const pick = (px: number) => {
    if (!scales || !stops.length) return;
    let x = scales.x.invert(px);
    if (view) x = Math.min(Math.max(x, view[0]), view[1]);
    const i = nearestStop(stops, x);
    if (i >= 0 && inView(stops[i])) setCursorX(stops[i]);
  };
  const onPointerDown = (e: PointerEvent) => {
    const px = pointerX(e);
    if (e.nativeEvent.pointerType === 'mouse' && e.nativeEvent.button === 0) {
      capturePointer(e);
      setDrag({ from: px, to: px });
    }
    pick(px);
  };
  const onPointerMove = (e: PointerEvent) => {
    const px = pointerX(e);
    if (drag) setDrag({ from: drag.from, to: px });
    pick(px);
  };
  const onPointerUp = () => {
    if (drag && scales && full) {
      const d = selectionDomain(drag.from, drag.to, (p) => scales.x.invert(p), full);
      if (d) setView(d);
    }
    setDrag(null);
  };
  const onPointerLeave = (e: PointerEvent) => {
    if (e.nativeEvent.pointerType === 'mouse' && !drag && !focused) setCursorX(null);
  };
  const onKeyDown = (e: { key: string; shiftKey?: boolean; preventDefault(): void; nativeEvent?: { key: string; shiftKey?: boolean } }) => {
    const key = e.nativeEvent?.key ?? e.key;
    const big = (e.nativeEvent?.shiftKey ?? e.shiftKey) ? 10 : 1;
    const act: Record<string, () => void> = {
      ArrowRight: () => step(big),
      ArrowUp: () => step(big),
      ArrowLeft: () => step(-big),
      ArrowDown: () => step(-big),
      PageUp: () => step(10),
      PageDown: () => step(-10),
      Home: () => moveTo(0),
      End: () => moveTo(stops.length - 1),
      '+': zoomIn,
      '=': zoomIn,
      '-': zoomOut,
      _: zoomOut,
      '0': () => setZoom(null),
      Escape: () => setCursorX(null),
    };
    const f = act[key];
    if (!f) return;
    e.preventDefault();
    f();
  };
  const onAccessibilityAction = (e: AccessibilityActionEvent) => {
    if (e.nativeEvent.actionName === 'increment') step(1);
    if (e.nativeEvent.actionName === 'decrement') step(-1);
  };

  const plotW = scales ? width - scales.innerR - scales.padL : 0;
  const cx = stopIndex >= 0 && scales && inView(stops[stopIndex]) ? scales.x(stops[stopIndex]) : null;
  // The x tag under the crosshair, kept whole inside the chart at either end.
  const tagX = cx === null ? 0 : Math.min(Math.max(cx, 31), width - 31);
  const valueText = lines.length ? lines.join('; ') : 'No point chosen. Use the arrow keys to step through the points.';

  return (
    <View style={styles.wrap}>
      <View
        onLayout={(e: LayoutChangeEvent) => setWidth(Math.round(e.nativeEvent.layout.width))}
        style={{ width: '100%', height }}
        testID={testID}
      >
        {scales ? (
          <>
            <ChartPlot width={width} height={height} series={drawn} scales={scales} markers={markers} xLabel={xLabel} yLabel={yLabel} yRightLabel={yRightLabel} clip={zoomed} />
            <View style={StyleSheet.absoluteFill} pointerEvents="none">
              <Svg width={width} height={height}>
                {drag && Math.abs(drag.to - drag.from) > 2 ? (
                  <Rect
                    x={Math.max(scales.padL, Math.min(drag.from, drag.to))}
                    y={PAD.top}
                    width={Math.min(Math.abs(drag.to - drag.from), plotW)}
                    height={height - PAD.top - PAD.bottom}
                    fill={colors.accentSoft}
                    opacity={0.6}
                    stroke={colors.accent}
                  />
                ) : null}
                {cx !== null ? (
                  <>
                    <Line x1={cx} x2={cx} y1={PAD.top} y2={height - PAD.bottom} stroke={colors.ink} strokeWidth={1} strokeDasharray="4 3" />
                    {readings.map((r) => {
                      const y = r.series.axis === 'right' && scales.yR ? scales.yR : scales.yL;
                      return <Circle key={r.series.id} cx={scales.x(r.x)} cy={y(r.y)} r={5} fill={r.series.color} stroke={colors.surface} strokeWidth={2} />;
                    })}
                    <Rect x={tagX - 30} y={height - PAD.bottom + 2} width={60} height={18} rx={4} fill={colors.ink} />
                    <SvgText x={tagX} y={height - PAD.bottom + 15} fontSize={FONT} fill={colors.surface} textAnchor="middle" fontFamily={fonts.semibold}>
                      {readoutNumber(stops[stopIndex])}
                    </SvgText>
                  </>
                ) : null}
              </Svg>
            </View>
          </>
        ) : null}
        <View
          style={[StyleSheet.absoluteFill, styles.events, focused && styles.focused]}
          focusable
          role="slider"
          aria-label={`${summary} Crosshair read-out.`}
          aria-valuemin={0}
          aria-valuemax={Math.max(0, stops.length - 1)}
          aria-valuenow={Math.max(0, stopIndex)}
          aria-valuetext={valueText}
          accessibilityActions={[{ name: 'increment' }, { name: 'decrement' }]}
          onAccessibilityAction={onAccessibilityAction}
          onPointerDown={onPointerDown}
          onPointerMove={onPointerMove}
          onPointerUp={onPointerUp}
          onPointerCancel={() => setDrag(null)}
          onPointerLeave={onPointerLeave}
          onFocus={() => setFocused(true)}
          onBlur={() => setFocused(false)}
          testID={testID ? `${testID}-explore` : undefined}
          {...({ onKeyDown } as object)}
        />
      </View>
      <View style={styles.readout} testID={testID ? `${testID}-readout` : undefined}>
        {lines.length ? (
          readings.map((r, i) => (
            <View key={r.series.id} style={styles.readRow}>
              <View style={[styles.swatch, { backgroundColor: r.series.color }]} />
              <Text numeric variant="label">
                {lines[i]}
              </Text>
            </View>
          ))
        ) : (
          <Text variant="caption" tone="muted">
            {phone ? HINT_PHONE : HINT}
          </Text>
        )}
      </View>
      <View style={styles.controls}>
        <Button label="Zoom in" kind="secondary" onPress={zoomIn} disabled={!view} testID={testID ? `${testID}-zoom-in` : undefined} />
        {zoomed ? (
          <>
            <Button label="Zoom out" kind="secondary" onPress={zoomOut} testID={testID ? `${testID}-zoom-out` : undefined} />
            <Button label="Whole range" kind="quiet" onPress={() => setZoom(null)} testID={testID ? `${testID}-zoom-reset` : undefined} />
            <Button label="◀" accessibilityLabel="Move the view to smaller x" kind="quiet" onPress={() => pan(-1)} testID={testID ? `${testID}-pan-left` : undefined} />
            <Button label="▶" accessibilityLabel="Move the view to larger x" kind="quiet" onPress={() => pan(1)} testID={testID ? `${testID}-pan-right` : undefined} />
            <Text variant="caption" tone="muted" numeric testID={testID ? `${testID}-range` : undefined}>
              Showing {readoutNumber(view![0])}–{readoutNumber(view![1])}
              {unit}
            </Text>
          </>
        ) : null}
      </View>
    </View>
  );
}

const styles = StyleSheet.create({
  wrap: { gap: space.sm },
  // pan-y: a finger sliding sideways reads values, one moving up or down still scrolls the page.
  events: { touchAction: 'pan-y', userSelect: 'none', cursor: 'crosshair', borderRadius: radius.sm } as object,
  focused: { borderWidth: 2, borderColor: colors.focus },
  readout: { minHeight: 48, justifyContent: 'center', gap: space.xxs },
  readRow: { flexDirection: 'row', alignItems: 'center', gap: space.sm },
  swatch: { width: 12, height: 12, borderRadius: 3 },
  controls: { flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: space.sm },
});
