// What the bench shows before the local database is ready, or instead of it: another tab owns it, or this browser
// cannot store it. Nothing can be recorded in those states, and the screen says so.
import type { ReactNode } from 'react';
import { View } from 'react-native';
import { useLocalDb, type LocalDbState } from '../../local/localDb';
import { space } from '../../theme/tokens';
import { Badge, Card, Screen, Text } from '../../ui';

export function LocalGate({ children, screenTitle }: { children: (state: Extract<LocalDbState, { status: 'ready' }>) => ReactNode; screenTitle?: string }) {
  const local = useLocalDb();
  if (local.status === 'ready') return <>{children(local)}</>;
  // On a screen of its own (a run, the setup) the message still sits in the usual frame.
  if (screenTitle) return <Screen title={screenTitle} testID="screen-local-gate"><GateMessage local={local} /></Screen>;
  return <GateMessage local={local} />;
}

function GateMessage({ local }: { local: Exclude<LocalDbState, { status: 'ready' }> }) {
  if (local.status === 'opening') {
    return (
      <Card title="Opening this device's records…" testID="local-opening">
        <Text tone="muted">The bench keeps every reading on this device first.</Text>
      </Card>
    );
  }
  if (local.status === 'other-tab') {
    return (
      <Card tone="warn" title="Halfmark is open in another tab" testID="other-tab">
        <Text>
          Only one tab at a time can record on this device, so that no reading is written twice or lost. Use the other
          tab, or close it: this tab takes over by itself when the other one is closed.
        </Text>
      </Card>
    );
  }
  return (
    <Card tone="danger" title="This browser cannot keep your readings" testID="storage-unavailable">
      <Text>Nothing can be recorded here: a reading would be lost when the page closes.</Text>
      <Text variant="caption" tone="muted">
        Reason: {local.reason} Open Halfmark in a normal (not private) window, or allow site storage.
      </Text>
    </Card>
  );
}

/** A one-line statement of where readings go, always visible on the bench. */
export function StorageBadge({ state }: { state: Extract<LocalDbState, { status: 'ready' }> }) {
  const p = state.storage.persisted;
  return (
    <View style={{ gap: space.xs }} testID="storage-state">
      {p === true ? (
        <Badge tone="ok" label="Saved on this device" />
      ) : (
        <Badge tone="warn" label="Saved on this device · browser may clear it" />
      )}
      {!state.lockGuard ? <Text variant="caption" tone="warn">This browser cannot guard against a second tab: keep Halfmark in one tab.</Text> : null}
    </View>
  );
}

export function StorageNote({ state }: { state: Extract<LocalDbState, { status: 'ready' }> }) {
  if (state.storage.persisted === true) return null;
  return (
    <Card tone="warn" title="Storage is not guaranteed" testID="storage-not-persistent">
      <Text variant="caption">
        Readings are saved on this device, but the browser has not promised to keep its storage: it may clear it when
        the device runs short of space. Add Halfmark to the home screen to ask again, and sync runs to the lab when you
        are online.
      </Text>
    </Card>
  );
}
