// The titration plots built on LineChart: pH against volume with the derivative overlaid and markers for the
// equivalence point(s) and half-equivalence pH (= pKa estimate), and the Gran plot.
import { useMemo } from 'react';
import type { AnalysisResult } from '../../../shared/schemas/run-document';
import { colors } from '../../theme/tokens';
import { LineChart, type ChartMarker, type ChartSeries } from './LineChart';
import type { XY } from './downsample';

export interface CurveChartProps {
  /** Measured readings as {x: volume mL, y: pH}. */
  readings: readonly XY[];
  /** Predicted curve (the plan), drawn dashed. */
  predicted?: readonly XY[];
  /** An engine result, or the live part of one (the bench's live analysis). */
  result?: { derivative: readonly Pick<AnalysisResult['derivative'][number], 'volumeMl' | 'dpHdV'>[]; equivalencePoints: AnalysisResult['equivalencePoints']; halfEquivalence: AnalysisResult['halfEquivalence'] } | null;
  showDerivative?: boolean;
  height?: number;
  testID?: string;
}

export function CurveChart({ readings, predicted, result, showDerivative = true, height, testID }: CurveChartProps) {
  const series = useMemo(() => {
    const s: ChartSeries[] = [];
    if (predicted?.length) s.push({ id: 'plan', label: 'Plan', points: predicted, color: colors.lineStrong, dashed: true, width: 2 });
    s.push({ id: 'pH', label: 'pH', points: readings, color: colors.curve, dots: true });
    if (showDerivative && result?.derivative.length) {
      s.push({ id: 'd', label: 'dpH/dV', points: result.derivative.map((d) => ({ x: d.volumeMl, y: d.dpHdV })), color: colors.derivative, axis: 'right', width: 2 });
    }
    return s;
  }, [readings, predicted, result, showDerivative]);
  const markers = useMemo(() => {
    const m: ChartMarker[] = [];
    for (const e of result?.equivalencePoints ?? []) m.push({ x: e.volumeMl, label: `Ve ${e.volumeMl.toFixed(2)} mL` });
    for (const h of result?.halfEquivalence ?? []) m.push({ y: h.pH, label: `pH ${h.pH.toFixed(2)} at Ve/2`, color: colors.fit });
    return m;
  }, [result]);
  const last = readings[readings.length - 1];
  const summary = `Titration curve, ${readings.length} readings${last ? `, last pH ${last.y.toFixed(2)} at ${last.x.toFixed(2)} mL` : ''}${
    result?.equivalencePoints.length ? `, equivalence at ${result.equivalencePoints.map((e) => e.volumeMl.toFixed(2)).join(' and ')} mL` : ''
  }.`;
  return (
    <LineChart
      series={series}
      markers={markers}
      xLabel="Volume of titrant (mL)"
      yLabel="pH"
      yRightLabel={showDerivative && result?.derivative.length ? 'dpH/dV' : undefined}
      yDomain={[0, 14]}
      height={height}
      summary={summary}
      testID={testID}
    />
  );
}

export function GranChart({ gran, height, testID }: { gran: AnalysisResult['gran']; height?: number; testID?: string }) {
  const series = useMemo(() => {
    const s: ChartSeries[] = [];
    const before = gran.before.filter((p) => p.used).map((p) => ({ x: p.volumeMl, y: p.value }));
    const after = gran.after.filter((p) => p.used).map((p) => ({ x: p.volumeMl, y: p.value }));
    if (before.length) s.push({ id: 'gb', label: 'before', points: before, color: colors.acid, dots: true });
    if (after.length) s.push({ id: 'ga', label: 'after', points: after, color: colors.base, dots: true, axis: 'right' });
    return s;
  }, [gran]);
  if (!series.length) return null;
  return (
    <LineChart
      series={series}
      xLabel="Volume of titrant (mL)"
      yLabel="V·10^−pH (before)"
      yRightLabel={series.some((s) => s.axis === 'right') ? '(V0+V)·10^(pH−pKw) (after)' : undefined}
      height={height}
      summary={`Gran plot: ${gran.before.filter((p) => p.used).length} points before and ${gran.after.filter((p) => p.used).length} after the equivalence point.`}
      testID={testID}
    />
  );
}
