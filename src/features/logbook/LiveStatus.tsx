// The small live-follow state on the run report: following live / polling / stopped, and when the last reading
// arrived. It ticks once a second on its own, so the report (plots, tables) does not re-render for the clock.
import { useEffect, useRef, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import type { ReadingRow } from '../../../shared/schemas/desk';
import { colors, radius, space } from '../../theme/tokens';
import { Text } from '../../ui';
import { ago } from './format';
import type { LiveFollow } from './useLiveFollow';

const LABEL = { connecting: 'Connecting…', live: 'Following live', polling: 'Polling', paused: 'Paused', stopped: 'Stopped' } as const;
const DOT = { connecting: colors.inkFaint, live: colors.ok, polling: colors.warn, paused: colors.inkFaint, stopped: colors.lineStrong } as const;

function latestReading(readings: readonly ReadingRow[]): ReadingRow | null {
  let best: ReadingRow | null = null;
  for (const r of readings) if (r.kind === 'reading' && (!best || r.receivedAt > best.receivedAt)) best = r;
  return best;
}

export function LiveStatus({ live, readings }: { live: LiveFollow; readings: readonly ReadingRow[] }) {
  const last = latestReading(readings);
  // When the screen saw the newest reading arrive, by this device's clock. "… ago" is said only of a reading seen
  // arriving: the one already there at opening has only the server's receipt time, and this device's clock may be
  // hours or days off the server's.
  const atOpening = useRef<string | null | undefined>(undefined);
  if (atOpening.current === undefined) atOpening.current = last?.id ?? null;
  const seen = useRef<{ id: string; at: number; arrived: boolean } | null>(null);
  if (last && seen.current?.id !== last.id) {
    seen.current = { id: last.id, at: Date.now(), arrived: last.id !== atOpening.current };
  }
  const ticking = live.mode === 'live' || live.mode === 'polling';
  const [now, setNow] = useState(() => Date.now());
  useEffect(() => {
    if (!ticking) return;
    const t = setInterval(() => setNow(Date.now()), 1000);
    return () => clearInterval(t);
  }, [ticking]);
  if (!live.followed) return null;

  const lastText = last
    ? `Last reading ${last.receivedAt.slice(11, 19)} UTC${ticking && seen.current!.arrived ? `, ${ago(now - seen.current!.at)} ago` : ''}`
    : 'No reading yet';
  return (
    <View style={styles.box} testID="live-follow">
      <View style={styles.row}>
        <View style={[styles.dot, { backgroundColor: DOT[live.mode] }]} />
        <Text variant="label" testID="live-state" accessibilityLiveRegion="polite">
          {LABEL[live.mode]}
        </Text>
        <Text variant="caption" tone="muted" numeric testID="live-last-reading">
          {lastText}
        </Text>
      </View>
      {live.note ? (
        <Text variant="caption" tone={live.mode === 'polling' ? 'warn' : 'muted'} testID="live-note">
          {live.note}
        </Text>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  box: { borderWidth: 1, borderColor: colors.line, borderRadius: radius.md, backgroundColor: colors.surface, paddingHorizontal: space.md, paddingVertical: space.sm, gap: space.xxs },
  row: { flexDirection: 'row', alignItems: 'center', flexWrap: 'wrap', columnGap: space.sm, rowGap: space.xxs },
  dot: { width: 10, height: 10, borderRadius: 5 },
});
