// Readings as a table (time, volume, pH), newest first. Only the newest rows are drawn while recording, so a run
// of thousands of readings stays quick; the review can show them all. Values whose write is still in flight are
// listed on top as "saving…"; they are read from the live run's store by the rows that show them, so a value typed
// re-renders those rows alone (not the table, nor the stored rows below).
import { memo, useCallback, useState } from 'react';
import { useStore } from 'zustand';
import { Pressable, StyleSheet, View } from 'react-native';
import type { CheckpointRow, ReadingRow } from '../../local/types';
import { colors, radius, space, touch } from '../../theme/tokens';
import { Button, Field, Text } from '../../ui';
import { formatClock } from './clock';
import { CONTAINED, ISLAND_PARENT, OWN_LAYER } from './contained';
import type { Effective } from './effective';
import { numberOrUndefined } from './setup';
import { useUnsaved, type RunStore } from './useBenchRun';

export interface ReadingsTableProps {
  readings: readonly Effective<ReadingRow>[];
  checkpoints: readonly Effective<CheckpointRow>[];
  volumeAt(timeS: number): number | null;
  limit?: number;
  /** The live run whose values on their way to the local database are shown on top (as saving, not yet counted). */
  savingFrom?: RunStore;
  onCorrectReading?(eff: Effective<ReadingRow>, pH: number | null, reason: string): Promise<unknown>;
  onCorrectCheckpoint?(eff: Effective<CheckpointRow>, ml: number | null, reason: string): Promise<unknown>;
}

type Row = { kind: 'reading'; eff: Effective<ReadingRow>; n: number } | { kind: 'checkpoint'; eff: Effective<CheckpointRow>; n: number };

export const ReadingsTable = memo(function ReadingsTable({ readings, checkpoints, volumeAt, limit = 25, savingFrom, onCorrectReading, onCorrectCheckpoint }: ReadingsTableProps) {
  const total = readings.length + checkpoints.length;
  const [showAll, setShowAll] = useState(false);
  const [editing, setEditing] = useState<string | null>(null);
  const toggle = useCallback((id: string) => setEditing((e) => (e === id ? null : id)), []);
  const close = useCallback(() => setEditing(null), []);
  const onShowAll = useCallback(() => setShowAll(true), []);
  // Once the newest `limit` rows fill the table, its rows keep one height: a value being saved goes on top and the
  // oldest row slides under the bottom edge until the save commits and drops it. The box is then laid out on its
  // own (contained.ts), so a saved value re-measures the rows, not the screen around them. Not while a correction
  // form is open or all rows are shown (those change the height).
  const pinned = !showAll && editing === null && total >= limit;
  return (
    <View style={styles.table} testID="readings-table" accessibilityRole="list" aria-label="Readings">
      <TableHead />
      <View style={ISLAND_PARENT}>
        <View style={pinned ? [styles.pinned, { height: limit * ROW_HEIGHT }] : null} testID={pinned ? 'rows-pinned' : undefined}>
          {savingFrom ? <SavingRows rs={savingFrom} readingsBefore={readings.length} checkpointsBefore={checkpoints.length} volumeAt={volumeAt} /> : null}
          {/* On a layer of its own while the newest rows are shown (contained.ts); not under "show all", where it
              would hold every row of a long run. */}
          <View style={showAll ? null : OWN_LAYER}>
            <StoredRows readings={readings} checkpoints={checkpoints} volumeAt={volumeAt} take={showAll ? total : limit} editing={editing} onToggle={toggle} onClose={close} onCorrectReading={onCorrectReading} onCorrectCheckpoint={onCorrectCheckpoint} />
          </View>
        </View>
      </View>
      {total > limit && !showAll ? <ShowAll total={total} onPress={onShowAll} /> : null}
      {total === 0 ? (savingFrom ? <NoRowsLive rs={savingFrom} /> : <NoRowsNote />) : null}
      <TableNote />
    </View>
  );
});

// The fixed parts, memoised: a value being saved re-renders the table around them, not them.
const TableHead = memo(function TableHead() {
  return (
    <View style={[styles.row, styles.headRow]}>
      <Text variant="label" style={styles.cN}>#</Text>
      <Text variant="label" style={styles.c}>Time</Text>
      <Text variant="label" style={styles.c} align="right">mL</Text>
      <Text variant="label" style={styles.c} align="right">pH</Text>
    </View>
  );
});

// Memoised on the count: a value being saved re-renders the table, and a Pressable-based button is among the
// costlier elements to render.
const ShowAll = memo(function ShowAll({ total, onPress }: { total: number; onPress(): void }) {
  return <Button kind="quiet" label={`Show all ${total} rows`} onPress={onPress} testID="show-all-rows" />;
});

const TableNote = memo(function TableNote() {
  return (
    <Text variant="caption" tone="muted" style={styles.emptyText}>
      * corrected: the original is kept. Tap a row to correct or delete it (with a reason).
    </Text>
  );
});

// "No readings yet", gone as soon as a first value is being saved.
function NoRowsLive({ rs }: { rs: RunStore }) {
  return useStore(rs, (s) => s.unsaved.length > 0) ? null : <NoRowsNote />;
}

function NoRowsNote() {
  return (
    <Text tone="muted" style={styles.emptyText}>
      No readings yet.
    </Text>
  );
}

/** Values typed but not yet committed, newest first, numbered as they will be once stored. */
const SavingRows = memo(function SavingRows({ rs, readingsBefore, checkpointsBefore, volumeAt }: { rs: RunStore; readingsBefore: number; checkpointsBefore: number; volumeAt(timeS: number): number | null }) {
  const unsaved = useUnsaved(rs);
  if (!unsaved.length) return null;
  let nR = readingsBefore;
  let nC = checkpointsBefore;
  const rows = unsaved.map((u) => ({ u, n: u.kind === 'reading' ? ++nR : ++nC })).reverse();
  return (
    <>
      {rows.map(({ u, n }) => {
        const v = volumeAt(u.row.timeS);
        return (
          <View
            key={u.row.id}
            style={[styles.row, styles.dataRow, styles.savingRow]}
            testID={`saving-${u.kind}-${n}`}
            accessibilityLabel={`${u.kind === 'reading' ? `Reading ${n}` : `Checkpoint ${n}`} at ${formatClock(u.row.timeS)}, saving`}
          >
            <Text numeric style={styles.cN} tone="muted">
              {u.kind === 'reading' ? n : `B${n}`}
            </Text>
            <Text numeric style={styles.c} tone="muted">
              {formatClock(u.row.timeS)}
            </Text>
            <Text numeric style={styles.c} align="right" tone="muted">
              {u.kind === 'checkpoint' ? `${u.row.buretteMl?.toFixed(2)} read` : v === null ? '—' : v.toFixed(2)}
            </Text>
            <View style={[styles.c, styles.savingCell]}>
              <Text numeric align="right" tone="muted">
                {u.kind === 'reading' ? cellPH(u.row) : ''}
              </Text>
              <Text variant="caption" tone="muted" align="right">
                saving…
              </Text>
            </View>
          </View>
        );
      })}
    </>
  );
});

type StoredRowsProps = Pick<ReadingsTableProps, 'readings' | 'checkpoints' | 'volumeAt' | 'onCorrectReading' | 'onCorrectCheckpoint'> & {
  take: number;
  editing: string | null;
  onToggle(id: string): void;
  onClose(): void;
};

const StoredRows = memo(function StoredRows({ readings, checkpoints, volumeAt, take, editing, onToggle, onClose, onCorrectReading, onCorrectCheckpoint }: StoredRowsProps) {
  // Both lists come sorted by time; only the newest `take` of each can be on screen, so only those are merged
  // (a run of thousands of readings does not sort them all at every tap).
  const rows: Row[] = [
    ...readings.slice(Math.max(0, readings.length - take)).map((eff, i, a) => ({ kind: 'reading' as const, eff, n: readings.length - a.length + i + 1 })),
    ...checkpoints.slice(Math.max(0, checkpoints.length - take)).map((eff, i, a) => ({ kind: 'checkpoint' as const, eff, n: checkpoints.length - a.length + i + 1 })),
  ].sort((a, b) => b.eff.current.timeS - a.eff.current.timeS);
  const shown = rows.slice(0, take);
  return (
    <>
      {shown.map((r) => (
        <StoredRow
          key={r.eff.current.id}
          kind={r.kind}
          eff={r.eff}
          n={r.n}
          volume={volumeAt(r.eff.current.timeS)}
          open={editing === r.eff.current.id}
          onToggle={onToggle}
          onClose={onClose}
          onCorrectReading={onCorrectReading}
          onCorrectCheckpoint={onCorrectCheckpoint}
        />
      ))}
    </>
  );
});

// One stored row, memoised: a new reading adds a row and drops the oldest one shown; the others stay as they are.
const StoredRow = memo(function StoredRow({
  kind,
  eff,
  n,
  volume: v,
  open,
  onToggle,
  onClose,
  onCorrectReading,
  onCorrectCheckpoint,
}: { kind: Row['kind']; eff: Row['eff']; n: number; volume: number | null; open: boolean; onToggle(id: string): void; onClose(): void } & Pick<ReadingsTableProps, 'onCorrectReading' | 'onCorrectCheckpoint'>) {
  const r = { kind, eff, n } as Row;
  const c = r.eff.current;
  const corrected = r.eff.history.length > 1;
  return (
    <View accessibilityRole="none">
      <Pressable
        accessibilityRole="button"
        accessibilityLabel={`${r.kind === 'reading' ? `Reading ${r.n}` : `Checkpoint ${r.n}`} at ${formatClock(c.timeS)}; tap to correct`}
        testID={r.kind === 'reading' ? `reading-row-${r.n}` : `checkpoint-row-${r.n}`}
        onPress={() => onToggle(c.id)}
        style={[styles.row, styles.dataRow, r.kind === 'checkpoint' && styles.checkpointRow]}
      >
        <Text numeric style={styles.cN} tone="muted">
          {r.kind === 'reading' ? r.n : `B${r.n}`}
        </Text>
        <Text numeric style={styles.c}>{formatClock(c.timeS)}</Text>
        <Text numeric style={styles.c} align="right">
          {r.kind === 'checkpoint' ? `${(c as CheckpointRow).buretteMl?.toFixed(2)} read` : v === null ? '—' : v.toFixed(2)}
        </Text>
        <Text numeric style={styles.c} align="right" tone={corrected ? 'accent' : 'ink'}>
          {r.kind === 'reading' ? cellPH(c as ReadingRow) : ''}
          {corrected ? ' *' : ''}
        </Text>
      </Pressable>
      {open ? (
        <Correction
          kind={r.kind}
          unit={r.kind === 'reading' ? 'pH' : 'mL'}
          onCancel={onClose}
          onSave={async (value, reason) => {
            const done = r.kind === 'reading' ? await onCorrectReading?.(r.eff as Effective<ReadingRow>, value, reason) : await onCorrectCheckpoint?.(r.eff as Effective<CheckpointRow>, value, reason);
            if (done !== undefined) onClose();
          }}
          history={r.eff.history.map((h) => (r.kind === 'reading' ? cellPH(h as ReadingRow) : String((h as CheckpointRow).buretteMl ?? 'deleted')) + (h.reason ? ` — ${h.reason}` : ''))}
        />
      ) : null}
    </View>
  );
});

function cellPH(r: ReadingRow): string {
  if (r.voided) return 'deleted';
  if (r.pH !== null) return r.pH.toFixed(2);
  return r.mV !== null ? `${r.mV.toFixed(1)} mV` : '—';
}

function Correction({ kind, unit, onSave, onCancel, history }: { kind: 'reading' | 'checkpoint'; unit: string; onSave(value: number | null, reason: string): Promise<void>; onCancel(): void; history: string[] }) {
  const [value, setValue] = useState('');
  const [reason, setReason] = useState('');
  const [err, setErr] = useState<string | null>(null);
  const save = async (del: boolean) => {
    if (!reason.trim()) {
      setErr('Give a reason: the original stays in the record beside the correction.');
      return;
    }
    const v = del ? null : numberOrUndefined(value);
    if (!del && (v === undefined || Number.isNaN(v))) {
      setErr(`Type the corrected ${unit}.`);
      return;
    }
    setErr(null);
    await onSave(v ?? null, reason);
  };
  return (
    <View style={styles.correct} testID="correction">
      {history.length > 1 ? <Text variant="caption" tone="muted">History: {history.join(' → ')}</Text> : null}
      <Field label={`Corrected ${kind === 'reading' ? 'pH' : 'burette reading'}`} unit={unit} value={value} onChangeText={setValue} keyboardType="decimal-pad" testID="correction-value" />
      <Field label="Reason" value={reason} onChangeText={setReason} placeholder="e.g. misread the meter" testID="correction-reason" error={err} />
      <View style={styles.correctButtons}>
        <Button label="Save correction" onPress={() => void save(false)} testID="correction-save" />
        <Button label="Delete" kind="danger" onPress={() => void save(true)} testID="correction-delete" />
        <Button label="Cancel" kind="secondary" onPress={onCancel} />
      </View>
    </View>
  );
}

const ROW_HEIGHT = touch.min;

const styles = StyleSheet.create({
  table: { borderWidth: 1, borderColor: colors.line, borderRadius: radius.md, backgroundColor: colors.surface, overflow: 'hidden' },
  row: { flexDirection: 'row', alignItems: 'center', minHeight: touch.min, paddingHorizontal: space.md, borderBottomWidth: 1, borderBottomColor: colors.grid },
  // A data row is one line of fixed height, laid out on its own (contained.ts): without it every change elsewhere
  // on the screen re-measured all the rows shown, most of the layout time of a tap.
  dataRow: { height: ROW_HEIGHT, ...CONTAINED },
  pinned: { overflow: 'hidden', ...CONTAINED },
  headRow: { backgroundColor: colors.sunken, minHeight: 40 },
  checkpointRow: { backgroundColor: colors.paper },
  savingRow: { backgroundColor: colors.sunken },
  savingCell: { alignItems: 'flex-end' },
  cN: { width: 44 },
  c: { flex: 1 },
  correct: { padding: space.md, gap: space.sm, backgroundColor: colors.accentSoft },
  correctButtons: { flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' },
  emptyText: { padding: space.md },
});
