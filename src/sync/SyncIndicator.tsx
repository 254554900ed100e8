// The always-present sync state: offline / n waiting / syncing / all synced / k rejected. Pressing it shows the
// rejected changes with the server's reasons (they stay on the device; nothing is discarded).
import { useState } from 'react';
import { Pressable, StyleSheet, View } from 'react-native';
import { Badge, Text } from '../ui';
import { space } from '../theme/tokens';
import { clockOffsetText, describeSync } from './describe';
import { useSyncStatus } from './useSync';

export function SyncIndicator() {
  const { status, signedIn, rejected } = useSyncStatus();
  const [open, setOpen] = useState(false);
  const [reasons, setReasons] = useState<{ reason: string | null; entity: string }[]>([]);
  const d = describeSync(status, signedIn);
  const toggle = async () => {
    if (!open) setReasons(await rejected());
    setOpen(!open);
  };
  return (
    <View testID="sync-indicator" accessibilityLabel={`Sync: ${d.label}`}>
      <Pressable onPress={toggle} accessibilityRole="button" disabled={!status?.rejected && !status?.clockFlagged && !status?.message}>
        <Badge label={d.label} tone={d.tone} testID="sync-state" />
      </Pressable>
      {open ? (
        <View style={styles.detail} testID="sync-detail">
          {status?.message ? <Text variant="caption" tone="muted">{status.message}</Text> : null}
          {status?.clockFlagged ? (
            <Text variant="caption" tone="warn" testID="sync-clock-flag">
              This device's clock is {clockOffsetText(status.clockOffsetMs ?? 0)}; runs it syncs now are flagged. Set the
              device's date and time; readings stay in run-clock order either way.
            </Text>
          ) : null}
          {reasons.map((r, i) => (
            <Text key={i} variant="caption" tone="danger" testID="sync-rejected-reason">
              {r.entity}: {r.reason ?? 'rejected'}
            </Text>
          ))}
        </View>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({ detail: { gap: space.xs, paddingTop: space.xs, maxWidth: 320 } });
