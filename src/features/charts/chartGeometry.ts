// Pure geometry of the explorable charts (LineChart with `interactive`): the nearest point for the crosshair, the
// stops the keyboard steps through, and the x-range arithmetic of zooming and panning. No React, so it is tested
// on its own (chartGeometry.test.ts).
import type { XY } from './downsample';

export type Domain = readonly [number, number];

const finite = (p: XY) => Number.isFinite(p.x) && Number.isFinite(p.y);

/** Indices of the finite points, ordered by x (stable for equal x). */
export function orderByX(points: readonly XY[]): number[] {
  const idx: number[] = [];
  for (let i = 0; i < points.length; i++) if (finite(points[i])) idx.push(i);
  return idx.sort((a, b) => points[a].x - points[b].x || a - b);
}

/**
 * Index (into `points`) of the point nearest to `x` along x, searching the x-ordered `order` by bisection;
 * -1 when there is none. On a tie the one with the smaller x wins.
 */
export function nearestByX(points: readonly XY[], order: readonly number[], x: number): number {
  if (!order.length || !Number.isFinite(x)) return -1;
  let lo = 0;
  let hi = order.length - 1;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (points[order[mid]].x < x) lo = mid + 1;
    else hi = mid;
  }
  // lo is the first at or after x; its left neighbour may be closer.
  if (lo > 0 && Math.abs(points[order[lo - 1]].x - x) <= Math.abs(points[order[lo]].x - x)) return order[lo - 1];
  return order[lo];
}

/** The x values the keyboard steps through: every distinct x of every series, ascending. */
export function xStops(series: readonly (readonly XY[])[]): number[] {
  const xs: number[] = [];
  for (const pts of series) for (const p of pts) if (finite(p)) xs.push(p.x);
  xs.sort((a, b) => a - b);
  const out: number[] = [];
  for (const x of xs) if (out.length === 0 || x !== out[out.length - 1]) out.push(x);
  return out;
}

/** Index of the stop nearest to x (-1 when there are no stops). */
export function nearestStop(stops: readonly number[], x: number): number {
  if (!stops.length || !Number.isFinite(x)) return -1;
  let lo = 0;
  let hi = stops.length - 1;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (stops[mid] < x) lo = mid + 1;
    else hi = mid;
  }
  return lo > 0 && Math.abs(stops[lo - 1] - x) <= Math.abs(stops[lo] - x) ? lo - 1 : lo;
}

/** `from` moved by `delta` stops, held inside the list; from -1 (nothing chosen) a step forward lands on the first. */
export function stepStop(count: number, from: number, delta: number): number {
  if (count <= 0) return -1;
  if (from < 0) return delta >= 0 ? 0 : count - 1;
  return Math.min(count - 1, Math.max(0, from + delta));
}

export const span = (d: Domain) => d[1] - d[0];

/** The narrowest view: a thousandth of the whole range (tighter zooms only show the gaps between readings). */
export const minSpan = (full: Domain) => Math.max(span(full) / 1000, Number.EPSILON * Math.max(1, Math.abs(full[0]), Math.abs(full[1])));

/** `d` kept inside `full` (moved, not shrunk, when it sticks out) and no narrower than minSpan. */
export function clampDomain(d: Domain, full: Domain): Domain {
  const fullSpan = span(full);
  let w = Math.min(Math.max(span(d), minSpan(full)), fullSpan);
  if (!(w > 0)) w = fullSpan;
  let lo = d[0] + (span(d) - w) / 2;
  lo = Math.min(Math.max(lo, full[0]), full[1] - w);
  return [lo, lo + w];
}

/** Zoom by `factor` (below 1 zooms in) keeping `anchor` at the same place on screen (the middle when not given). */
export function zoomAt(d: Domain, full: Domain, factor: number, anchor?: number): Domain {
  const a = anchor !== undefined && Number.isFinite(anchor) ? Math.min(Math.max(anchor, d[0]), d[1]) : (d[0] + d[1]) / 2;
  const w = Math.min(span(full), Math.max(minSpan(full), span(d) * factor));
  const t = span(d) > 0 ? (a - d[0]) / span(d) : 0.5;
  let lo = a - t * w;
  lo = Math.min(Math.max(lo, full[0]), full[1] - w);
  return [lo, lo + w];
}

/** The view moved by a fraction of its own width (negative: to smaller x), stopping at the ends. */
export function panBy(d: Domain, full: Domain, fraction: number): Domain {
  const w = span(d);
  const lo = Math.min(Math.max(d[0] + fraction * w, full[0]), full[1] - w);
  return [lo, lo + w];
}

/** The view shifted just enough that x is inside it, with a margin of a tenth of its width. */
export function ensureVisible(d: Domain, full: Domain, x: number): Domain {
  const w = span(d);
  const m = w / 10;
  if (x >= d[0] + m && x <= d[1] - m) return d;
  const lo = x < d[0] + m ? x - m : x + m - w;
  return clampDomain([lo, lo + w], full);
}

/** True when the view is the whole range (within rounding). */
export const isWhole = (d: Domain, full: Domain) => Math.abs(d[0] - full[0]) <= span(full) * 1e-9 && Math.abs(d[1] - full[1]) <= span(full) * 1e-9;

/**
 * The x range picked by dragging from pixel a to pixel b, with `invert` the scale from pixels to x; null when the drag
 * is too short to be meant as a selection (a click).
 */
export function selectionDomain(a: number, b: number, invert: (px: number) => number, full: Domain, minPx = 8): Domain | null {
  if (Math.abs(b - a) < minPx) return null;
  const x0 = invert(Math.min(a, b));
  const x1 = invert(Math.max(a, b));
  return clampDomain([Math.max(x0, full[0]), Math.min(x1, full[1])], full);
}

/**
 * The points to draw in view: those inside, plus each one's neighbour just outside (in the series' own order) so the
 * line runs to the edges, where the plot clips it.
 */
export function visiblePoints<T extends XY>(points: readonly T[], d: Domain): T[] {
  const inside = (p: T | undefined) => p !== undefined && p.x >= d[0] && p.x <= d[1];
  const out: T[] = [];
  for (let i = 0; i < points.length; i++) {
    if (inside(points[i]) || inside(points[i - 1]) || inside(points[i + 1])) out.push(points[i]);
  }
  return out;
}

/** y extent of the points whose x is in view; null when none is. */
export function yExtentIn(series: readonly (readonly XY[])[], d: Domain): [number, number] | null {
  let lo = Infinity;
  let hi = -Infinity;
  for (const pts of series) {
    for (const p of pts) {
      if (!finite(p) || p.x < d[0] || p.x > d[1]) continue;
      if (p.y < lo) lo = p.y;
      if (p.y > hi) hi = p.y;
    }
  }
  if (lo === Infinity) return null;
  if (lo === hi) return [lo - Math.max(1e-12, Math.abs(lo) * 0.05), hi + Math.max(1e-12, Math.abs(hi) * 0.05)];
  const pad = (hi - lo) * 0.05;
  return [lo - pad, hi + pad];
}

/** A value for the read-out: four significant figures, plain notation for everyday magnitudes. */
export function readoutNumber(v: number, digits = 4): string {
  if (!Number.isFinite(v)) return '—';
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e-3 && a < 1e6) return Number(v.toPrecision(digits)).toString();
  return v.toExponential(digits - 1).replace('e', '×10^').replace('^+', '^');
}
