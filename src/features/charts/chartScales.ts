// The scales of a LineChart: x across the plot, y on the left axis and, when a series asks for it, on the right.
import { scaleLinear, type ScaleLinear } from 'd3-scale';
import type { ChartMarker, ChartSeries } from './chartTypes';

export const PAD = { left: 44, right: 44, top: 14, bottom: 40 } as const;
/** Right margin when there is no right axis. */
export const PAD_RIGHT_PLAIN = 16;

export interface ChartScales {
  x: ScaleLinear<number, number>;
  yL: ScaleLinear<number, number>;
  yR: ScaleLinear<number, number> | null;
  /** Right margin in pixels. */
  innerR: number;
}

export function extent(values: Iterable<number>): [number, number] | null {
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

/** The whole x range: the points of every series and the vertical markers. */
export function fullXDomain(series: readonly ChartSeries[], markers: readonly ChartMarker[] = []): [number, number] | null {
  return extent([...series.flatMap((s) => s.points.map((p) => p.x)), ...markers.flatMap((m) => (m.x !== undefined ? [m.x] : []))]);
}

/**
 * Scales for the drawn series. `exactX` keeps the x domain as given (a zoomed view); otherwise it is rounded out to
 * tidy ticks, as are the y domains.
 */
export function makeScales(opts: {
  width: number;
  height: number;
  series: readonly ChartSeries[];
  markers: readonly ChartMarker[];
  xDomain?: readonly [number, number];
  yDomain?: readonly [number, number];
  yRightDomain?: readonly [number, number];
  exactX?: boolean;
}): ChartScales | null {
  const { width, height, series, markers } = opts;
  if (width <= 0) return null;
  const hasRight = series.some((s) => s.axis === 'right');
  const xs = opts.xDomain ?? fullXDomain(series, markers);
  const ysL = opts.yDomain ?? extent(series.filter((s) => s.axis !== 'right').flatMap((s) => s.points.map((p) => p.y)));
  const ysR = opts.yRightDomain ?? extent(series.filter((s) => s.axis === 'right').flatMap((s) => s.points.map((p) => p.y)));
  if (!xs || !ysL) return null;
  const innerR = hasRight ? PAD.right : PAD_RIGHT_PLAIN;
  const x = scaleLinear().domain(xs).range([PAD.left, width - innerR]);
  if (!opts.exactX) x.nice();
  const yL = scaleLinear().domain(ysL).range([height - PAD.bottom, PAD.top]).nice();
  const yR = ysR ? scaleLinear().domain(ysR).range([height - PAD.bottom, PAD.top]).nice() : null;
  return { x, yL, yR, innerR };
}
