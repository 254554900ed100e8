// The scales of a LineChart: x across the plot, y on the left axis and, when a series asks for it, on the right.
import { scaleLinear, type ScaleLinear } from 'd3-scale';
import type { ChartMarker, ChartSeries } from './chartTypes';

/** Margins in pixels; left and right are the least, widened to fit the tick labels of the y axes. */
export const PAD = { left: 44, right: 44, top: 14, bottom: 40 } as const;
/** Right margin when there is no right axis. */
export const PAD_RIGHT_PLAIN = 16;
/** Room for the rotated axis title beside the tick labels, and a tick label's width per character (12 px font). */
const TITLE_ROOM = 22;
const CHAR_PX = 7.2;

export interface Tick {
  value: number;
  label: string;
}

export interface ChartScales {
  x: ScaleLinear<number, number>;
  yL: ScaleLinear<number, number>;
  yR: ScaleLinear<number, number> | null;
  yTicksL: Tick[];
  yTicksR: Tick[];
  /** Left margin in pixels (where the plot area starts). */
  padL: number;
  /** Right margin in pixels. */
  innerR: number;
}

/**
 * Labels for a set of ticks: as written when the numbers are everyday sizes, in powers of ten ("2e-4") when the largest
 * is below 0.01 or from 100 000 on, so a Gran function's axis does not need a wide margin of zeros.
 */
export function tickLabels(ticks: readonly number[]): Tick[] {
  const big = Math.max(0, ...ticks.map(Math.abs));
  const exp = big > 0 && (big < 1e-2 || big >= 1e5);
  return ticks.map((t) => ({
    value: t,
    label: !exp || t === 0 ? String(t) : Number(t.toPrecision(3)).toExponential().replace('e+', 'e'),
  }));
}

const labelRoom = (ticks: readonly Tick[]) => Math.max(0, ...ticks.map((t) => t.label.length)) * CHAR_PX;

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
  const yL = scaleLinear().domain(ysL).range([height - PAD.bottom, PAD.top]).nice();
  const yR = hasRight && ysR ? scaleLinear().domain(ysR).range([height - PAD.bottom, PAD.top]).nice() : null;
  const yTicksL = tickLabels(yL.ticks(5));
  const yTicksR = yR ? tickLabels(yR.ticks(5)) : [];
  const padL = Math.max(PAD.left, Math.ceil(TITLE_ROOM + labelRoom(yTicksL) + 6));
  const innerR = yR ? Math.max(PAD.right, Math.ceil(TITLE_ROOM + labelRoom(yTicksR) + 6)) : PAD_RIGHT_PLAIN;
  const x = scaleLinear().domain(xs).range([padL, Math.max(padL + 1, width - innerR)]);
  if (!opts.exactX) x.nice();
  return { x, yL, yR, yTicksL, yTicksR, padL, innerR };
}
