// Run setup's choice among the lab's calibrations: one row per titrant lot, drip setting or electrode, the one in
// force chosen by default, each with its state and dates; "type by hand" keeps the typed fields (and their warning).
import { useMemo, type ReactNode } from 'react';
import { Pressable, StyleSheet, View } from 'react-native';
import { colors, radius, space, touch } from '../../theme/tokens';
import { Badge, Text, type BadgeTone } from '../../ui';
import { useActiveLab } from '../calibrate/hooks';
import { describeAge, useCalibrationsOffline } from '../calibrate/offline';
import { calibrationOptions, dateOnly, MANUAL, NO_ELECTRODE, stateWords, type CalibrationOptions, type ChoiceOption, type ChoiceState } from './calibrationChoice';
import { DEFAULT_ELECTRODE_MAX_AGE_H } from './setup';

const TONE: Record<ChoiceState, BadgeTone> = { 'in-force': 'ok', superseded: 'neutral', stale: 'warn', expired: 'danger', failed: 'danger', withdrawn: 'danger' };

export interface SetupCalibrations {
  options: CalibrationOptions | null;
  electrodeMaxAgeH: number;
  /** One line on where the calibrations come from and how old the copy is; null while there is nothing to say. */
  source: { text: string; tone: 'muted' | 'warn' } | null;
}

/** The active lab's calibrations for run setup, from the server or, offline, from this device's copy. */
export function useSetupCalibrations(nowMs: number): SetupCalibrations {
  const { labId } = useActiveLab();
  const q = useCalibrationsOffline(labId);
  const data = q.data;
  const options = useMemo(() => (data ? calibrationOptions(data.overview, nowMs) : null), [data, nowMs]);
  let source: SetupCalibrations['source'] = null;
  if (!labId) source = { text: 'Sign in to choose from your lab\u2019s calibrations; until then type the values.', tone: 'muted' };
  else if (data?.fromCache) source = { text: `Offline: the lab\u2019s calibrations as kept on this device, fetched ${describeAge(data.fetchedAtMs, nowMs)} (${new Date(data.fetchedAtMs).toLocaleString()}). Newer ones may exist.`, tone: 'warn' };
  else if (data) source = { text: `The lab\u2019s calibrations, fetched ${describeAge(data.fetchedAtMs, nowMs)}${data.kept ? '; a copy is kept on this device for offline use' : ''}.`, tone: 'muted' };
  else if (q.isError) source = { text: `The lab\u2019s calibrations could not be loaded (${q.error instanceof Error ? q.error.message : String(q.error)}) and none are kept on this device: type the values.`, tone: 'warn' };
  else if (q.isFetching) source = { text: 'Loading the lab\u2019s calibrations\u2026', tone: 'muted' };
  return { options, electrodeMaxAgeH: data?.overview.settings.electrodeMaxAgeHours ?? DEFAULT_ELECTRODE_MAX_AGE_H, source };
}

export interface CalibrationPickerProps<F> {
  label: string;
  options: ChoiceOption<F>[];
  value: string;
  onChange(id: string): void;
  manualLabel: string;
  /** For the electrode: running without a calibration (pH typed from the meter). */
  noneLabel?: string;
  testID: string;
  /** The typed fields, shown only when typing by hand is chosen. */
  children?: ReactNode;
}

export function CalibrationPicker<F>({ label, options, value, onChange, manualLabel, noneLabel, testID, children }: CalibrationPickerProps<F>) {
  return (
    <View style={styles.list} accessibilityRole="radiogroup" aria-label={label} testID={testID}>
      {options.map((o) => (
        <Row key={o.id} on={value === o.id} onPress={() => onChange(o.id)} testID={`${testID}-option`} label={o.label}>
          <View style={styles.head}>
            <Text variant="label" style={styles.grow}>
              {o.label}
            </Text>
            <Badge label={stateWords(o.state)} tone={TONE[o.state]} testID={`${testID}-state`} />
          </View>
          <Text variant="caption" numeric>
            {o.detail}
          </Text>
          <Text variant="caption" tone="muted" numeric>
            Made {dateOnly(o.performedAt)} · valid until {dateOnly(o.expiresAt)}
          </Text>
          {o.reasons.length ? (
            <Text variant="caption" tone="danger">
              {o.reasons.join('; ')}
            </Text>
          ) : null}
        </Row>
      ))}
      {noneLabel ? (
        <Row on={value === NO_ELECTRODE} onPress={() => onChange(NO_ELECTRODE)} testID={`${testID}-none`} label={noneLabel}>
          <Text variant="label">{noneLabel}</Text>
        </Row>
      ) : null}
      <Row on={value === MANUAL} onPress={() => onChange(MANUAL)} testID={`${testID}-manual`} label={manualLabel}>
        <Text variant="label">{manualLabel}</Text>
        {options.length ? null : (
          <Text variant="caption" tone="muted">
            No calibration of the lab to choose here.
          </Text>
        )}
      </Row>
      {value === MANUAL ? children : null}
    </View>
  );
}

function Row({ on, onPress, label, testID, children }: { on: boolean; onPress(): void; label: string; testID: string; children: ReactNode }) {
  return (
    <Pressable
      accessibilityRole="radio"
      accessibilityState={{ checked: on }}
      aria-checked={on}
      accessibilityLabel={label}
      onPress={onPress}
      testID={testID}
      style={[styles.row, on && styles.rowOn]}
    >
      <View style={[styles.dot, on && styles.dotOn]} />
      <View style={styles.body}>{children}</View>
    </Pressable>
  );
}

const styles = StyleSheet.create({
  list: { gap: space.sm },
  row: {
    flexDirection: 'row',
    gap: space.md,
    alignItems: 'flex-start',
    minHeight: touch.min,
    padding: space.md,
    borderWidth: 1,
    borderColor: colors.line,
    borderRadius: radius.md,
    backgroundColor: colors.surface,
  },
  rowOn: { borderColor: colors.accent, borderWidth: 2, backgroundColor: colors.accentSoft },
  dot: { width: 20, height: 20, borderRadius: radius.pill, borderWidth: 2, borderColor: colors.lineStrong, marginTop: 2 },
  dotOn: { borderColor: colors.accent, backgroundColor: colors.accent },
  body: { flex: 1, gap: space.xxs, minWidth: 0 },
  head: { flexDirection: 'row', gap: space.sm, alignItems: 'center', flexWrap: 'wrap' },
  grow: { flexShrink: 1 },
});
