// Pending marks and the keypad. Marks wait in a list in tap order; any one can be chosen and completed while the
// clock keeps running. A mark shows at the tap, marked "saving" until its write commits; typing can start at once.
// The typed text stays until it has been saved, so a failed write loses nothing.
// The panel and its keypad stay mounted while the clock runs (idle: nothing to type for), and the chips and keys
// are memoised on stable callbacks, so a tap or a keystroke re-renders the few elements it changes.
import { createContext, memo, useCallback, useContext, useDeferredValue, useMemo, useRef, useState } from 'react';
import { ScrollView, StyleSheet, View } from 'react-native';
import type { MarkRow } from '../../local/types';
import { colors, fonts, radius, space, touch } from '../../theme/tokens';
import { Button, Segmented, Text } from '../../ui';
import { formatClock } from './clock';
import { CONTAINED, ISLAND_PARENT } from './contained';
import { Keypad } from './Keypad';
import { PadKey } from './PadKey';
import { MODE_RULES, parseEntry, pressKey, type EntryMode, type Key } from './keypad';
import type { OpenMark } from './useBenchRun';

export interface EntryPanelProps {
  pending: readonly OpenMark[];
  hasElectrode: boolean;
  onReading(mark: MarkRow, mode: 'pH' | 'mV', value: number): Promise<unknown>;
  onCheckpoint(mark: MarkRow, buretteMl: number): Promise<unknown>;
  onDiscard(mark: MarkRow): Promise<unknown>;
}

const MODE_OPTIONS = [
  { key: 'pH', label: 'pH' },
  { key: 'mV', label: 'mV' },
] as const;

export const EntryPanel = memo(function EntryPanel({ pending, hasElectrode, onReading, onCheckpoint, onDiscard }: EntryPanelProps) {
  // The mark the analyst chose; otherwise the oldest waiting mark is the one being typed.
  const [chosenId, setChosenId] = useState<string | null>(null);
  // One draft per mark: typing for the next mark can begin while the last one is still being written, and a
  // failed write keeps its text.
  const [drafts, setDrafts] = useState<Record<string, string>>({});
  const [saving, setSaving] = useState<ReadonlySet<string>>(new Set());
  const [readingMode, setReadingMode] = useState<'pH' | 'mV'>('pH');
  // An entry error belongs to the mark it was made for (shown while that mark is the active one).
  const [entryError, setEntryError] = useState<{ markId: string; text: string } | null>(null);

  const open = useMemo(() => pending.filter((m) => !saving.has(m.id)), [pending, saving]);
  const active = open.find((m) => m.id === chosenId) ?? open[0] ?? null;
  const mode: EntryMode = active?.kind === 'checkpoint' ? 'mL' : readingMode;
  const text = active ? (drafts[active.id] ?? '') : '';
  const error = active && entryError?.markId === active.id ? entryError.text : null;

  // The keys and the chips get callbacks that never change; they read the current entry through this ref.
  const now = useRef({ active, text, mode });
  now.current = { active, text, mode };

  const onKey = useCallback((k: Key) => {
    const { active: a, mode: md } = now.current;
    if (!a) return;
    setEntryError(null);
    setDrafts((d) => ({ ...d, [a.id]: pressKey(d[a.id] ?? '', k, md) }));
  }, []);

  const choose = useCallback((id: string) => {
    setChosenId(id);
    setEntryError(null);
  }, []);

  const onMode = useCallback((k: 'pH' | 'mV') => {
    const a = now.current.active;
    setReadingMode(k);
    if (a) setDrafts((d) => ({ ...d, [a.id]: '' }));
    setEntryError(null);
  }, []);

  const handlers = useRef({ onReading, onCheckpoint, onDiscard });
  handlers.current = { onReading, onCheckpoint, onDiscard };
  const confirm = useCallback(async () => {
    const { active: m, text: t, mode: md } = now.current;
    if (!m) return;
    const parsed = parseEntry(t, md);
    if (!parsed.ok) {
      setEntryError({ markId: m.id, text: parsed.error });
      return;
    }
    setSaving((s) => new Set(s).add(m.id));
    setChosenId(null);
    const h = handlers.current;
    const ok = m.kind === 'checkpoint' ? await h.onCheckpoint(m, parsed.value) : await h.onReading(m, md as 'pH' | 'mV', parsed.value);
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
      // Back to the mark whose value did not save, its text still there, and say so beside it (the reason is in the
      // message at the top of the screen, which may be scrolled away on a phone).
      setChosenId(m.id);
      setEntryError({ markId: m.id, text: 'Not saved: the value is kept here. Save again.' });
    }
  }, []);

  const onDiscardActive = useCallback(() => {
    const a = now.current.active;
    if (a) void handlers.current.onDiscard(a);
  }, []);

  const rule = MODE_RULES[mode];
  // Whether Save and Discard are enabled follows a frame behind (a deferred render): a tap's own frame shows its
  // mark (chip and heading) without re-rendering the keypad and the discard button. Digits typed meanwhile go to
  // the current mark (the keys read it through `now`); Save and Discard take presses from the next frame on, and
  // one that lands while they still look enabled after a save finds no mark and does nothing.
  const idle = useDeferredValue(!active);
  // The strip of waiting marks follows a frame behind too: a tap's own frame shows the mark's time in the heading
  // (and a saved value in the table) before the chip is added or removed. A chip chosen meanwhile that is no longer
  // open is ignored (the oldest open mark stays active).
  const chips = useDeferredValue(open);
  const chipOn = useDeferredValue(active?.id ?? null);

  const kind = active?.kind ?? null;
  const timeS = active?.timeS ?? null;
  const head = useMemo(() => ({ kind, timeS, readingMode }), [kind, timeS, readingMode]);
  const mvWithoutCalibration = mode === 'mV' && !hasElectrode;
  const display = useMemo(() => ({ text, unit: rule.unit, error, mvWithoutCalibration }), [text, rule.unit, error, mvWithoutCalibration]);
  const pad = useMemo(() => ({ confirmLabel: `Save ${rule.unit}`, idle, allowSign: rule.negative }), [rule.unit, idle, rule.negative]);
  const strip = useMemo(() => ({ open: chips, activeId: chipOn }), [chips, chipOn]);
  // What changes goes down through contexts to the few elements that show it; the panel's boxes (PanelBody, with
  // callbacks that never change) are not rendered again by a tap, a keystroke or a save.
  return (
    <StripContext.Provider value={strip}>
      <HeadContext.Provider value={head}>
        <DisplayContext.Provider value={display}>
          <PadContext.Provider value={pad}>
            <PanelBody onChoose={choose} onMode={onMode} onKey={onKey} onConfirm={confirm} onDiscard={onDiscardActive} />
          </PadContext.Provider>
        </DisplayContext.Provider>
      </HeadContext.Provider>
    </StripContext.Provider>
  );
});

type HeadState = { kind: MarkRow['kind'] | null; timeS: number | null; readingMode: 'pH' | 'mV' };
type DisplayState = { text: string; unit: string; error: string | null; mvWithoutCalibration: boolean };
type PadState = { confirmLabel: string; idle: boolean; allowSign: boolean };
type StripState = { open: readonly OpenMark[]; activeId: string | null };
const HeadContext = createContext<HeadState>({ kind: null, timeS: null, readingMode: 'pH' });
const DisplayContext = createContext<DisplayState>({ text: '', unit: 'pH', error: null, mvWithoutCalibration: false });
const PadContext = createContext<PadState>({ confirmLabel: 'Save', idle: true, allowSign: false });
const StripContext = createContext<StripState>({ open: [], activeId: null });

type PanelActions = { onChoose(id: string): void; onMode(k: 'pH' | 'mV'): void; onKey(k: Key): void; onConfirm(): void; onDiscard(): void };

// The panel's boxes, rendered once; each part below reads the context it shows.
const PanelBody = memo(function PanelBody({ onChoose, onMode, onKey, onConfirm, onDiscard }: PanelActions) {
  return (
    <View style={styles.wrap} testID="entry-panel">
      <LiveChipRow onChoose={onChoose} />
      <EntryHead onMode={onMode} />
      <EntryDisplay />
      <LivePad onKey={onKey} onConfirm={onConfirm} onDiscard={onDiscard} />
    </View>
  );
});

function LiveChipRow({ onChoose }: { onChoose(id: string): void }) {
  const { open, activeId } = useContext(StripContext);
  return <ChipRow open={open} activeId={activeId} onChoose={onChoose} />;
}

function LivePad({ onKey, onConfirm, onDiscard }: Pick<PanelActions, 'onKey' | 'onConfirm' | 'onDiscard'>) {
  const { confirmLabel, idle, allowSign } = useContext(PadContext);
  return (
    <>
      <Keypad onKey={onKey} onConfirm={onConfirm} confirmLabel={confirmLabel} confirmDisabled={idle} allowSign={allowSign} />
      <DiscardButton disabled={idle} onPress={onDiscard} />
    </>
  );
}

const ChipRow = memo(function ChipRow({ open, activeId, onChoose }: { open: readonly OpenMark[]; activeId: string | null; onChoose(id: string): void }) {
  return (
    // One box of fixed size for the chips or the idle note, laid out on its own (contained, in a block parent: see
    // contained.ts): a tap changes what is inside it, never the height of the panel (nothing else is re-measured).
    <View style={ISLAND_PARENT}>
      <View style={styles.slot}>
        {/* Mounted even when empty (hidden): the first mark of a series then adds one chip, not a scroll view. */}
        <ScrollView horizontal style={!activeId && styles.hidden} contentContainerStyle={styles.chips} accessibilityLabel="Marks waiting for a value" testID="pending-marks">
          {open.map((m, i) => (
            <MarkChip key={m.id} mark={m} index={i} on={m.id === activeId} onChoose={onChoose} />
          ))}
        </ScrollView>
        <IdleNote hidden={Boolean(activeId)} />
      </View>
    </View>
  );
});

// Shown while no mark waits; hidden, not unmounted, while one does (the tap then only flips its display).
const IdleNote = memo(function IdleNote({ hidden }: { hidden: boolean }) {
  return (
    <View style={[styles.empty, hidden && styles.hidden]} testID={hidden ? undefined : 'entry-idle'}>
      <Text variant="caption" tone="muted">
        Tap Mark when you read the meter; type the value after. Marks wait here until typed.
      </Text>
    </View>
  );
});

const EntryHead = memo(function EntryHead({ onMode }: { onMode(k: 'pH' | 'mV'): void }) {
  return (
    <View style={ISLAND_PARENT}>
      <View style={styles.head}>
        <View style={styles.headText}>
          <HeadLabel />
          <HeadTime />
        </View>
        <LiveModeSwitch onChange={onMode} />
      </View>
    </View>
  );
});

function HeadLabel() {
  const { kind } = useContext(HeadContext);
  return <HeadLabelText kind={kind} />;
}

const HeadLabelText = memo(function HeadLabelText({ kind }: { kind: HeadState['kind'] }) {
  return (
    <Text variant="label" tone="muted">
      {kind ? `${kind === 'checkpoint' ? 'Burette reading' : 'Meter reading'} for the mark at` : 'No mark waiting'}
    </Text>
  );
});

function HeadTime() {
  const { timeS } = useContext(HeadContext);
  return (
    // One element either way (a tap updates it rather than swapping it).
    <Text variant="heading" numeric tone={timeS === null ? 'muted' : 'ink'} testID={timeS === null ? undefined : 'active-mark-time'}>
      {timeS === null ? '--:--.-' : formatClock(timeS)}
    </Text>
  );
}

function LiveModeSwitch({ onChange }: { onChange(k: 'pH' | 'mV'): void }) {
  const { kind, readingMode } = useContext(HeadContext);
  return <ModeSwitch hidden={kind === 'checkpoint'} value={readingMode} onChange={onChange} />;
}

// pH or mV: kept mounted (hidden for a checkpoint) and memoised, so the heading's changes do not re-render it.
const ModeSwitch = memo(function ModeSwitch({ hidden, value, onChange }: { hidden: boolean; value: 'pH' | 'mV'; onChange(k: 'pH' | 'mV'): void }) {
  return (
    <View style={hidden && styles.hidden}>
      <Segmented label="Meter shows" testID="entry-mode" value={value} options={MODE_OPTIONS} onChange={onChange} />
    </View>
  );
});

const EntryDisplay = memo(function EntryDisplay() {
  return (
    <>
      <View style={ISLAND_PARENT}>
        <DisplayBox />
      </View>
      <DisplayNotes />
    </>
  );
});

function DisplayBox() {
  const { text, unit, error } = useContext(DisplayContext);
  return (
    <View style={[styles.display, error ? styles.displayError : null]} testID="entry-display" accessibilityLabel={`Typed ${text || 'nothing'} ${unit}`}>
      <Text style={styles.displayText} numeric>
        {text || ' '}
      </Text>
      <UnitText unit={unit} />
    </View>
  );
}

const UnitText = memo(function UnitText({ unit }: { unit: string }) {
  return (
    <Text variant="heading" tone="muted">
      {unit}
    </Text>
  );
});

function DisplayNotes() {
  const { error, mvWithoutCalibration } = useContext(DisplayContext);
  return <DisplayNotesText error={error} mvWithoutCalibration={mvWithoutCalibration} />;
}

const DisplayNotesText = memo(function DisplayNotesText({ error, mvWithoutCalibration }: { error: string | null; mvWithoutCalibration: boolean }) {
  return (
    <>
      {mvWithoutCalibration ? (
        <Text variant="caption" tone="warn" testID="mv-warning">
          No electrode calibration on this run: the value is kept in mV with no pH, and the analysis leaves it out.
        </Text>
      ) : null}
      {error ? (
        <Text variant="label" tone="danger" accessibilityRole="alert" testID="entry-error">
          {error}
        </Text>
      ) : null}
    </>
  );
});

const DiscardButton = memo(function DiscardButton({ disabled, onPress }: { disabled: boolean; onPress(): void }) {
  return <Button kind="quiet" label="Discard this mark" testID="discard-mark" disabled={disabled} onPress={onPress} />;
});

const MarkChip = memo(function MarkChip({ mark: m, index: i, on, onChoose }: { mark: OpenMark; index: number; on: boolean; onChoose(id: string): void }) {
  return (
    <PadKey
      selected={on}
      accessibilityLabel={`${m.kind === 'checkpoint' ? 'Checkpoint' : 'Reading'} marked at ${formatClock(m.timeS)}${m.saving ? ', saving the mark' : ''}`}
      testID={`pending-${i}`}
      onPress={() => onChoose(m.id)}
      style={[styles.chip, on && styles.chipOn, m.kind === 'checkpoint' && styles.chipCheckpoint]}
      pressedStyle={styles.chipPressed}
    >
      <Text variant="caption" tone={on ? 'inverse' : 'muted'}>
        {m.kind === 'checkpoint' ? 'Burette' : 'Reading'}
        {m.saving ? <Text variant="caption" tone={on ? 'inverse' : 'muted'} testID={`mark-saving-${i}`}>{' · saving…'}</Text> : null}
      </Text>
      <Text variant="label" tone={on ? 'inverse' : 'ink'} numeric>
        {formatClock(m.timeS)}
      </Text>
    </PadKey>
  );
});

const SLOT = 64;

const styles = StyleSheet.create({
  wrap: { gap: space.sm },
  slot: { height: SLOT, ...CONTAINED },
  empty: { height: SLOT, justifyContent: 'center', paddingHorizontal: space.md, borderRadius: radius.md, backgroundColor: colors.sunken },
  hidden: { display: 'none' },
  chips: { gap: space.sm, paddingVertical: space.xxs, alignItems: 'center', height: SLOT },
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
  chipPressed: { opacity: 0.75 },
  // Fixed height and contained, like the slot above: the heading's text changes at every tap.
  head: { flexDirection: 'row', alignItems: 'center', justifyContent: 'space-between', gap: space.sm, height: 56, ...CONTAINED },
  headText: { flexShrink: 1 },
  display: {
    flexDirection: 'row',
    alignItems: 'baseline',
    justifyContent: 'flex-end',
    gap: space.sm,
    height: 72,
    ...CONTAINED,
    paddingHorizontal: space.lg,
    borderRadius: radius.md,
    borderWidth: 2,
    borderColor: colors.ink,
    backgroundColor: colors.surface,
  },
  displayError: { borderColor: colors.danger },
  displayText: { fontSize: 48, lineHeight: 64, fontFamily: fonts.bold, color: colors.ink },
});
