// Small pieces shared by the Calibrate screens: status badge, result rows, error message, section gate.
import { Link } from 'expo-router';
import type { ReactNode } from 'react';
import { StyleSheet, View } from 'react-native';
import type { RecordStatus } from '../../../shared/schemas/calibration-api';
import { ApiRequestError } from '../../api/client';
import { space } from '../../theme/tokens';
import { Badge, Button, Card, Screen, Text } from '../../ui';
import { STATUS_LABEL } from './forms';
import { useActiveLab } from './hooks';

export function StatusBadge({ status, testID }: { status: RecordStatus; testID?: string }) {
  const s = STATUS_LABEL[status];
  return <Badge label={s.label} tone={s.tone} testID={testID} />;
}

/** A label and a value on one line (results). */
export function ResultRow({ label, value, testID }: { label: string; value: string; testID?: string }) {
  return (
    <View style={styles.row}>
      <Text tone="muted" style={styles.rowLabel}>
        {label}
      </Text>
      <Text numeric variant="label" testID={testID} style={styles.rowValue}>
        {value}
      </Text>
    </View>
  );
}

export function ErrorNote({ error }: { error: unknown }) {
  if (!error) return null;
  const e = error instanceof ApiRequestError ? error : null;
  return (
    <Card tone="danger" testID="form-error">
      <Text accessibilityRole="alert">{e ? e.message : error instanceof Error ? error.message : String(error)}</Text>
      {e?.details?.map((d, i) => (
        <Text key={i} variant="caption">
          {d.path ? `${d.path}: ` : ''}
          {d.message}
        </Text>
      ))}
    </Card>
  );
}

/** Calibration forms are for managers; anyone else is told so instead of getting a form the server would refuse. */
export function ManagerGate({ title, children }: { title: string; children: ReactNode }) {
  const { labId, isManager } = useActiveLab();
  if (!labId || !isManager) {
    return (
      <Screen title={title} testID="screen-calibrate-form">
        <Card>
          <Text>{labId ? 'Only a manager of the lab records calibrations. You can see them in Calibrate.' : 'Sign in to record calibrations.'}</Text>
          <Link href={labId ? '/calibrate' : '/sign-in'} asChild>
            <Button label={labId ? 'Back to Calibrate' : 'Sign in'} kind="secondary" />
          </Link>
        </Card>
      </Screen>
    );
  }
  return <>{children}</>;
}

/** Cautions for the titrant: CO2 uptake changes NaOH's concentration (carbonate), so it is restandardised. */
export function CarbonDioxideNote() {
  return (
    <Card tone="warn" title="Carbon dioxide and NaOH" testID="co2-note">
      <Text variant="caption">
        Sodium hydroxide solution takes up carbon dioxide from the air and turns partly into carbonate, so its
        concentration drifts. Restandardise before the standardisation expires and after the bottle has stood open;
        store it in polyethylene, protected from air (a guard tube with a CO2 absorbent).
      </Text>
    </Card>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', justifyContent: 'space-between', gap: space.md, flexWrap: 'wrap' },
  rowLabel: { flexShrink: 1 },
  rowValue: { flexShrink: 0 },
});
