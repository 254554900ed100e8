// The bench home: runs on this device (a live one first), a new run, and where the readings are kept.
import { router } from 'expo-router';
import { useEffect, useState } from 'react';
import { Pressable, StyleSheet, View } from 'react-native';
import type { LocalStore } from '../../local/store';
import type { RunRow } from '../../local/types';
import { colors, radius, space, touch } from '../../theme/tokens';
import { Badge, Button, Card, Screen, Text, type BadgeTone } from '../../ui';
import { LocalGate, StorageBadge, StorageNote } from './LocalGate';
import { SafetyNote } from './SafetyNote';

const STATUS: Record<RunRow['status'], { label: string; tone: BadgeTone }> = {
  ready: { label: 'Not started', tone: 'neutral' },
  running: { label: 'Clock running', tone: 'accent' },
  paused: { label: 'Paused', tone: 'warn' },
  finished: { label: 'Finished', tone: 'ok' },
  submitted: { label: 'Submitted', tone: 'ok' },
};

export function BenchScreen() {
  return (
    <Screen title="Bench" subtitle="Plan a run, start the clock with the drip, tap each reading." testID="screen-bench">
      <LocalGate>
        {(local) => (
          <>
            <View style={styles.top}>
              <Button size="large" label="New run" onPress={() => router.push('/bench/new')} testID="new-run" />
              <StorageBadge state={local} />
            </View>
            <StorageNote state={local} />
            <RunList store={local.store} />
          </>
        )}
      </LocalGate>
      <SafetyNote />
    </Screen>
  );
}

function RunList({ store }: { store: LocalStore }) {
  const [runs, setRuns] = useState<(RunRow & { readingCount: number })[] | null>(null);
  const [error, setError] = useState<string | null>(null);
  useEffect(() => {
    store.listRuns().then(setRuns, (e) => setError(String(e)));
  }, [store]);
  if (error) return <Text tone="danger">Could not list the runs: {error}</Text>;
  if (!runs) return null;
  if (!runs.length) {
    return (
      <Card title="No runs on this device yet" testID="runs-empty">
        <Text tone="muted">Start with New run: the plan tells you when to expect the break at your drip rate.</Text>
      </Card>
    );
  }
  const order = (r: RunRow) => (r.status === 'running' || r.status === 'paused' ? 0 : 1);
  const sorted = [...runs].sort((a, b) => order(a) - order(b) || b.createdWallMs - a.createdWallMs);
  return (
    <View style={styles.list} accessibilityRole="list" aria-label="Runs on this device" testID="run-list">
      {sorted.map((r) => (
        <Pressable key={r.id} accessibilityRole="link" accessibilityLabel={`${r.label}, ${STATUS[r.status].label}, ${r.readingCount} readings`} onPress={() => router.push(`/bench/run/${r.id}`)} style={({ pressed }) => [styles.item, pressed && styles.pressed]} testID="run-item">
          <View style={styles.itemText}>
            <Text variant="heading">{r.label}</Text>
            <Text variant="caption" tone="muted">
              {new Date(r.createdWallMs).toLocaleString()} · {r.readingCount} readings
            </Text>
          </View>
          <Badge label={STATUS[r.status].label} tone={STATUS[r.status].tone} />
        </Pressable>
      ))}
    </View>
  );
}

const styles = StyleSheet.create({
  top: { flexDirection: 'row', alignItems: 'center', gap: space.md, flexWrap: 'wrap' },
  list: { gap: space.sm },
  item: {
    minHeight: touch.large,
    flexDirection: 'row',
    alignItems: 'center',
    gap: space.md,
    padding: space.md,
    borderRadius: radius.lg,
    borderWidth: 1,
    borderColor: colors.line,
    backgroundColor: colors.surface,
  },
  itemText: { flex: 1, gap: space.xxs },
  pressed: { opacity: 0.8 },
});
