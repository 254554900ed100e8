// The plan: predicted curve at this drip rate, when each break should come, run time and reading cadence.
import { useMemo } from 'react';
import { View } from 'react-native';
import { space } from '../../theme/tokens';
import { Card, Text } from '../../ui';
import { LineChart } from '../charts/LineChart';
import { colors } from '../../theme/tokens';
import { formatClock } from './clock';
import type { PlanResult } from './plan';

export function PlanCard({ plan, compact }: { plan: PlanResult | null; compact?: boolean }) {
  const curve = plan?.ok ? plan.plan.curve : null;
  const series = useMemo(() => (curve ? [{ id: 'plan', label: 'Predicted', points: curve.map((p) => ({ x: p.volumeMl, y: p.pH })), color: colors.ink }] : []), [curve]);
  if (!plan) return null;
  if (!plan.ok) {
    return (
      <Card title="Plan" testID="plan-card">
        <Text tone="muted">{plan.reason}</Text>
      </Card>
    );
  }
  const p = plan.plan;
  return (
    <Card title="Plan" testID="plan-card">
      {series.length && !compact ? (
        <LineChart
          series={series}
          markers={p.equivalence.map((e) => ({ x: e.volumeMl, label: `Ve${p.equivalence.length > 1 ? e.step : ''} ${e.volumeMl.toFixed(2)} mL` }))}
          xLabel="Volume of titrant (mL)"
          yLabel="pH"
          yDomain={[0, 14]}
          height={220}
          summary={`Predicted curve with equivalence at ${p.equivalence.map((e) => e.volumeMl.toFixed(2)).join(' and ')} mL.`}
          testID="plan-chart"
        />
      ) : null}
      <View style={{ gap: space.xs }}>
        {p.equivalence.map((e) => (
          <Text key={e.step} variant="label" numeric testID={`plan-break-${e.step}`}>
            Break{p.equivalence.length > 1 ? ` ${e.step}` : ''} expected at {e.volumeMl.toFixed(2)} mL, clock {formatClock(e.timeS)}
          </Text>
        ))}
        <Text numeric>Run until about {formatClock(p.suggestedTotalS)} (1.5 × Ve).</Text>
        <Text numeric>
          Read every {p.cadenceS} s; every {p.cadenceNearBreakS} s near the break.
        </Text>
        {p.notes.map((n) => (
          <Text key={n} variant="caption" tone="warn">
            {n}
          </Text>
        ))}
      </View>
    </Card>
  );
}
