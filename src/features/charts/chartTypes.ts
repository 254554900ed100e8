import type { XY } from './downsample';

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
