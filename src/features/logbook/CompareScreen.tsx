import { useQueries } from '@tanstack/react-query';
import { useState } from 'react';
import { StyleSheet, View } from 'react-native';
import type { RunDetail } from '../../../shared/schemas/desk';
import type { AnalysisResult } from '../../../shared/schemas/run-document';
import { colors, space } from '../../theme/tokens';
import { Card, Screen, Text } from '../../ui';
import { api } from '../../api/client';
import { LineChart, type ChartSeries } from '../charts/LineChart';
import { keys } from '../../api/keys';
import { Chip } from './LogbookScreen';
import { plotsOf } from './RunReportScreen';
import { num, withU } from './format';

const PALETTE = [colors.curve, colors.accent, colors.base, colors.acid, colors.ok, colors.warn];

/** Overlays two or more runs, on volume or on fraction titrated (V / first Ve), with their results side by side. */
export function CompareScreen({ ids }: { ids: string[] }) {
  const [align, setAlign] = useState<'volume' | 'fraction'>('volume');
  const qs = useQueries({ queries: ids.map((id) => ({ queryKey: keys.run(id), queryFn: () => api<RunDetail>(`/runs/${id}`) })) });
  const runs = qs.map((q) => q.data).filter(Boolean) as RunDetail[];
  const series: ChartSeries[] = runs.map((d, i) => {
    const ve = (d.analysis as AnalysisResult | null)?.equivalencePoints[0]?.volumeMl;
    const pts = plotsOf(d).curve.map((p) => ({ x: align === 'fraction' && ve ? p.x / ve : p.x, y: p.y }));
    return { id: d.run.id, label: d.run.sampleName, points: pts, color: PALETTE[i % PALETTE.length], dots: false, width: 2 };
  });
  const missingVe = align === 'fraction' && runs.some((d) => !(d.analysis as AnalysisResult | null)?.equivalencePoints.length);
  return (
    <Screen title="Compare runs" subtitle={`${ids.length} runs overlaid`} testID="screen-compare">
      <View style={styles.row}>
        <Chip label="align on volume" on={align === 'volume'} onPress={() => setAlign('volume')} testID="align-volume" />
        <Chip label="align on fraction titrated" on={align === 'fraction'} onPress={() => setAlign('fraction')} testID="align-fraction" />
      </View>
      {missingVe && <Text tone="warn">A run without an equivalence point is drawn on volume.</Text>}
      <Card title="Curves" testID="compare-chart">
        {runs.length ? (
          <LineChart series={series} xLabel={align === 'volume' ? 'Volume of titrant (mL)' : 'Fraction titrated (V / Ve)'} yLabel="pH" yDomain={[0, 14]} height={320} summary={`${runs.length} curves overlaid`} />
        ) : (
          <Text tone="muted">Loading…</Text>
        )}
        <View style={styles.row}>
          {runs.map((d, i) => (
            <Text key={d.run.id} variant="caption" style={{ color: PALETTE[i % PALETTE.length] }}>■ {d.run.sampleName}</Text>
          ))}
        </View>
      </Card>
      <View style={styles.cols} testID="compare-results">
        {runs.map((d) => {
          const a = d.analysis as AnalysisResult | null;
          return (
            <Card key={d.run.id} title={d.run.sampleName} style={styles.col}>
              <Text variant="caption" tone="muted">{d.run.analystName} · {d.run.status}</Text>
              <Text numeric>Ve {withU(a?.equivalencePoints[0]?.volumeMl, a?.equivalencePoints[0]?.uMl, 'mL')}</Text>
              <Text numeric>pKa {withU(a?.pKa[0], a?.pKaU[0])}</Text>
              <Text numeric>M {withU(a?.molarMassGPerMol, a?.molarMassU, 'g/mol')}</Text>
              <Text numeric variant="caption">{num(d.readings.length, 6)} records · {a?.warnings.length ?? 0} warnings</Text>
            </Card>
          );
        })}
      </View>
    </Screen>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', flexWrap: 'wrap', gap: space.sm },
  cols: { flexDirection: 'row', flexWrap: 'wrap', gap: space.md },
  col: { flex: 1, minWidth: 220 },
});
