// Pending marks and the keypad. Marks wait in a list in tap order; any one can be chosen and completed while the
// clock keeps running. The typed text stays until it has been saved, so a failed write loses nothing.
import { memo, useCallback, useEffect, useState } from 'react';
import { Pressable, ScrollView, StyleSheet, View } from 'react-native';
import type { MarkRow } from '../../local/types';
import { colors, fonts, radius, space, touch } from '../../theme/tokens';
import { Button, Segmented, Text } from '../../ui';
import { formatClock } from './clock';
import { Keypad } from './Keypad';
import { MODE_RULES, parseEntry, pressKey, type EntryMode, type Key } from './keypad';

export interface EntryPanelProps {
  pending: readonly MarkRow[];
  hasElectrode: boolean;
  onReading(mark: MarkRow, mode: 'pH' | 'mV', value: number): Promise<unknown>;
  onCheckpoint(mark: MarkRow, buretteMl: number): Promise<unknown>;
  onDiscard(mark: MarkRow): Promise<unknown>;
}

export const EntryPanel = memo(function EntryPanel({ pending, hasElectrode, onReading, onCheckpoint, onDiscard }: EntryPanelProps) {
  const [activeId, setActiveId] = useState<string | null>(null);
  // One draft per mark: typing for the next mark can begin while the last one is still being written, and a
  // failed write keeps its text.
  const [drafts, setDrafts] = useState<Record<string, string>>({});
  const [saving, setSaving] = useState<ReadonlySet<string>>(new Set());
  const [readingMode, setReadingMode] = useState<'pH' | 'mV'>('pH');
  const [error, setError] = useState<string | null>(null);

  const open = pending.filter((m) => !saving.has(m.id));
  // The oldest pending mark is the one being typed unless the analyst chose another.
  const active = open.find((m) => m.id === activeId) ?? open[0] ?? null;
  const mode: EntryMode = active?.kind === 'checkpoint' ? 'mL' : readingMode;
  const text = active ? (drafts[active.id] ?? '') : '';
  const setText = useCallback((id: string, f: (t: string) => string) => setDrafts((d) => ({ ...d, [id]: f(d[id] ?? '') })), []);
  useEffect(() => {
    if (active && active.id !== activeId) {
      setActiveId(active.id);
      setError(null);
    }
  }, [active, activeId]);

  const onKey = useCallback(
    (k: Key) => {
      if (!active) return;
      setError(null);
      setText(active.id, (t) => pressKey(t, k, mode));
    },
    [active, mode, setText],
  );

  const confirm = useCallback(async () => {
    if (!active) return;
    const parsed = parseEntry(text, mode);
    if (!parsed.ok) {
      setError(parsed.error);
      return;
    }
    const m = active;
    setSaving((s) => new Set(s).add(m.id));
    setActiveId(null);
    const ok = m.kind === 'checkpoint' ? await onCheckpoint(m, parsed.value) : await onReading(m, mode as 'pH' | 'mV', parsed.value);
    setSaving((s) => {
      const n = new Set(s);
      n.delete(m.id);
      return n;
    });
    if (ok !== undefined) {
      setDrafts((d) => {
        const { [m.id]: _done, ...rest } = d;
        return rest;
      });
    } else {
      setActiveId(m.id); // back to the mark whose value did not save; its text is still there
    }
  }, [active, text, mode, onCheckpoint, onReading]);

  if (!active) {
    return (
      <View style={styles.empty} testID="entry-idle">
        <Text tone="muted">Tap Mark when you read the meter; type the value after. Marks wait here until typed.</Text>
      </View>
    );
  }
  const rule = MODE_RULES[mode];
  return (
    <View style={styles.wrap} testID="entry-panel">
      <ScrollView horizontal contentContainerStyle={styles.chips} accessibilityLabel="Marks waiting for a value" testID="pending-marks">
        {open.map((m, i) => {
          const on = m.id === active.id;
          return (
            <Pressable
              key={m.id}
              accessibilityRole="button"
              accessibilityState={{ selected: on }}
              accessibilityLabel={`${m.kind === 'checkpoint' ? 'Checkpoint' : 'Reading'} marked at ${formatClock(m.timeS)}`}
              testID={`pending-${i}`}
              onPress={() => {
                setActiveId(m.id);
                setError(null);
              }}
              style={[styles.chip, on && styles.chipOn, m.kind === 'checkpoint' && styles.chipCheckpoint]}
            >
              <Text variant="caption" tone={on ? 'inverse' : 'muted'}>
                {m.kind === 'checkpoint' ? 'Burette' : 'Reading'}
              </Text>
              <Text variant="label" tone={on ? 'inverse' : 'ink'} numeric>
                {formatClock(m.timeS)}
              </Text>
            </Pressable>
          );
        })}
      </ScrollView>
      <View style={styles.head}>
        <View style={styles.headText}>
          <Text variant="label" tone="muted">
            {active.kind === 'checkpoint' ? 'Burette reading' : 'Meter reading'} for the mark at
          </Text>
          <Text variant="heading" numeric testID="active-mark-time">
            {formatClock(active.timeS)}
          </Text>
        </View>
        {active.kind === 'reading' ? (
          <Segmented
            label="Meter shows"
            testID="entry-mode"
            value={readingMode}
            options={[
              { key: 'pH', label: 'pH' },
              { key: 'mV', label: 'mV' },
            ]}
            onChange={(k) => {
              setReadingMode(k);
              setText(active.id, () => '');
              setError(null);
            }}
          />
        ) : null}
      </View>
      <View style={[styles.display, error ? styles.displayError : null]} testID="entry-display" accessibilityLabel={`Typed ${text || 'nothing'} ${rule.unit}`}>
        <Text style={styles.displayText} numeric>
          {text || ' '}
        </Text>
        <Text variant="heading" tone="muted">
          {rule.unit}
        </Text>
      </View>
      {mode === 'mV' && !hasElectrode ? (
        <Text variant="caption" tone="warn" testID="mv-warning">
          No electrode calibration on this run: the value is kept in mV with no pH, and the analysis leaves it out.
        </Text>
      ) : null}
      {error ? (
        <Text variant="label" tone="danger" accessibilityRole="alert" testID="entry-error">
          {error}
        </Text>
      ) : null}
      <Keypad onKey={onKey} onConfirm={confirm} confirmLabel={`Save ${rule.unit}`} allowSign={rule.negative} />
      <Button kind="quiet" label="Discard this mark" testID="discard-mark" onPress={() => void onDiscard(active)} />
    </View>
  );
});

const styles = StyleSheet.create({
  wrap: { gap: space.sm },
  empty: { padding: space.md, borderRadius: radius.md, backgroundColor: colors.sunken },
  chips: { gap: space.sm, paddingVertical: space.xxs },
  chip: {
    minHeight: touch.min,
    minWidth: 96,
    paddingHorizontal: space.md,
    paddingVertical: space.xs,
    borderRadius: radius.md,
    borderWidth: 1.5,
    borderColor: colors.lineStrong,
    backgroundColor: colors.surface,
    justifyContent: 'center',
  },
  chipCheckpoint: { borderStyle: 'dashed' },
  chipOn: { backgroundColor: colors.ink, borderColor: colors.ink },
  head: { flexDirection: 'row', alignItems: 'center', justifyContent: 'space-between', gap: space.sm },
  headText: { flexShrink: 1 },
  display: {
    flexDirection: 'row',
    alignItems: 'baseline',
    justifyContent: 'flex-end',
    gap: space.sm,
    minHeight: 72,
    paddingHorizontal: space.lg,
    borderRadius: radius.md,
    borderWidth: 2,
    borderColor: colors.ink,
    backgroundColor: colors.surface,
  },
  displayError: { borderColor: colors.danger },
  displayText: { fontSize: 48, lineHeight: 64, fontFamily: fonts.bold, color: colors.ink },
});
