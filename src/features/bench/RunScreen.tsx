// One run on the bench: before the start (plan, start button), while the clock runs (tap, type, live curve), and
// after the finish (results, notes, submit for review).
import { router } from 'expo-router';
import { memo, useCallback, useDeferredValue, useEffect, useMemo, useRef, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import type { DeliveryMap } from '../../../shared/engine';
import type { MarkRow, ReadingRow } from '../../local/types';
import { useLayoutSize } from '../../theme/layout';
import { colors, radius, space } from '../../theme/tokens';
import { Badge, Button, Card, Screen, Text } from '../../ui';
import { CurveChart } from '../charts/TitrationCharts';
import { elapsedS, sleepGapS, type ClockEvent, type ClockStatus } from './clock';
import { ClockDisplay } from './ClockDisplay';
import { monoNow } from './clockSource';
import { cueSupported, playCue, primeCue } from './cue';
import type { Effective } from './effective';
import { EntryPanel, type EntryPanelProps } from './EntryPanel';
import { parseEntry } from './keypad';
import { LocalGate, StorageBadge } from './LocalGate';
import { MarkTargets } from './MarkTargets';
import { useOnScreen } from './onScreen';
import { cueIntervalS, type PlanResult } from './plan';
import { PlanCard } from './PlanCard';
import { ReadingsTable, type ReadingsTableProps } from './ReadingsTable';
import { RunReview } from './RunReview';
import { SafetyNote } from './SafetyNote';
import type { Refill } from './document';
import type { RunSetup } from './setup';
import {
  readingValue,
  useBenchRun,
  useCheckpoints,
  useClock,
  useDelivery,
  useOpenMarks,
  usePlan,
  useReadings,
  type SetupResult,
  useRunDocument,
  useRunLabel,
  useRunPresence,
  useRunSetup,
  useWriteError,
  type BenchRun,
  type RunActions,
  type RunStore,
} from './useBenchRun';
import { useLiveAnalysis, type LiveAnalysis, type LiveResult } from './useLiveAnalysis';
import { useScreenAwake } from './wakeLock';
import { Field } from '../../ui';
import { numberOrUndefined } from './setup';

export function RunScreen({ runId }: { runId: string }) {
  return (
    <LocalGate screenTitle="Run">
      {() => <RunLoaded runId={runId} />}
    </LocalGate>
  );
}

function RunLoaded({ runId }: { runId: string }) {
  const run = useBenchRun(runId);
  const presence = useRunPresence(run.runStore);
  const setup = useRunSetup(run.runStore);
  const { status } = useClock(run.runStore);
  const label = useRunLabel(run.runStore);
  if (presence === 'loading') return <Screen title="Run" testID="screen-run"><Text tone="muted">Opening the run…</Text></Screen>;
  if (presence === 'missing') {
    return (
      <Screen title="Run not found" testID="screen-run">
        <Text>This run is not on this device.</Text>
        <Button label="Back to the bench" onPress={() => router.replace('/bench')} />
      </Screen>
    );
  }
  if (!setup?.ok) {
    return (
      <Screen title={label} testID="screen-run">
        <Card tone="danger" title="The stored setup of this run is not readable">
          <Text>{setup?.error}</Text>
        </Card>
      </Screen>
    );
  }
  if (status === 'finished') return <RunReview run={run} />;
  return <RunBench run={run} setup={setup.setup} />;
}

/**
 * The recording screen. It subscribes only to what changes its frame (the clock, the setup, checkpoints); a tap, a
 * typed value or a stored reading re-renders only the parts that show them, which subscribe to those slices.
 */
const RunBench = memo(function RunBench({ run, setup }: { run: BenchRun; setup: RunSetup }) {
  const { runStore: rs, actions } = run;
  const size = useLayoutSize();
  const wide = size === 'wide';
  const { clockEvents, status } = useClock(rs);
  const live = status === 'running' || status === 'paused';
  const wake = useScreenAwake(live);
  const setupResult = useRunSetup(rs);
  const plan = usePlan(setupResult);
  const { refills, deliveryMap } = useDelivery(rs, setupResult);
  const label = useRunLabel(rs);
  const writeError = useWriteError(rs);
  const localState = run.local.status === 'ready' ? run.local : null;

  const { mark, enterReading, correctReading, correctCheckpoint } = actions;
  const onMark = useCallback((kind: 'reading' | 'checkpoint', monoMs: number) => void mark(kind, monoMs), [mark]);
  const onReading = useCallback((m: MarkRow, mode: 'pH' | 'mV', value: number) => enterReading(m, readingValue(setup, mode, value)), [enterReading, setup]);
  const onCorrectReading = useCallback(
    (eff: Effective<ReadingRow>, pH: number | null, reason: string) => {
      if (pH !== null) {
        const p = parseEntry(String(pH), 'pH');
        if (!p.ok) return Promise.resolve(undefined);
      }
      // Undefined when not saved: the correction form stays open with its text, beside the error.
      return correctReading(eff, pH === null ? null : { pH, mV: null, pHSource: 'typed' }, reason);
    },
    [correctReading],
  );
  const volumeAt = useCallback((t: number) => (deliveryMap ? Math.max(0, deliveryMap.volumeAt(t)) : null), [deliveryMap]);

  const header = <RunBadges status={status} localState={localState} sleepWarning={live && wake !== 'held'} />;
  const controls = <RunControls clockEvents={clockEvents} status={status} plan={plan} onClock={actions.clockAction} />;

  const tapArea =
    status === 'paused' ? (
      <RefillPanel onResume={actions.clockAction} />
    ) : status === 'running' ? (
      <View style={styles.tapArea}>
        <MarkTargets disabled={false} onMark={onMark} layout={wide ? 'wide' : 'phone'} />
        <LiveEntry rs={rs} hasElectrode={Boolean(setup.electrode)} onReading={onReading} onCheckpoint={actions.enterCheckpoint} onDiscard={actions.discardMark} />
      </View>
    ) : null;

  const results = <LiveResults rs={rs} setup={setupResult} refills={refills} deliveryMap={deliveryMap} plan={plan} live={live} showChart={status !== 'ready'} height={wide ? 320 : 240} />;
  const table = <LiveTable rs={rs} volumeAt={volumeAt} onCorrectReading={onCorrectReading} onCorrectCheckpoint={correctCheckpoint} />;
  const errorBar = writeError ? (
    <Card tone="danger" testID="write-error">
      <Text accessibilityRole="alert">{writeError}</Text>
      <Button kind="secondary" label="Dismiss" onPress={actions.clearWriteError} />
    </Card>
  ) : null;

  const before =
    status === 'ready' ? (
      <>
        <PlanCard plan={plan} />
        <SafetyNote compact />
      </>
    ) : null;

  return (
    <Screen title={label} subtitle={status === 'ready' ? 'Fill the burette, read the start, start the drip and the clock together.' : undefined} actions={header} testID="screen-run">
      {errorBar}
      {wide ? (
        <View style={styles.columns}>
          <View style={styles.left}>
            {controls}
            {tapArea}
          </View>
          <View style={styles.right}>
            {results}
            {before}
            {status !== 'ready' ? table : null}
          </View>
        </View>
      ) : (
        <>
          {controls}
          {tapArea}
          {results}
          {before}
          {status !== 'ready' ? table : null}
        </>
      )}
    </Screen>
  );
});

/**
 * The live estimates and the curve (adjacent in both layouts). They follow the stored readings a moment behind the
 * taps: React renders them after the urgent update, and the analysis runs off the main thread, so a long run never
 * delays what the finger just did.
 */
const LiveResults = memo(function LiveResults({ rs, setup, refills, deliveryMap, plan, live, showChart, height }: { rs: RunStore; setup: SetupResult; refills: Refill[]; deliveryMap: DeliveryMap | null; plan: PlanResult | null; live: boolean; showChart: boolean; height: number }) {
  const readings = useReadings(rs);
  const deferredReadings = useDeferredValue(readings);
  const built = useRunDocument(rs, setup, refills);
  const analysis = useLiveAnalysis(built?.doc ?? null, live);
  // The curve is drawn again only while it is on screen (on a phone it is below the keypad while one types): a new
  // reading then costs no redraw between taps, and scrolling to it draws the latest at once.
  const [chartBox, setChartBox] = useState<View | null>(null);
  const onScreen = useOnScreen(chartBox);
  const drawn = useRef({ readings: deferredReadings, result: analysis?.result ?? null });
  if (onScreen) drawn.current = { readings: deferredReadings, result: analysis?.result ?? null };
  return (
    <>
      {live ? <LiveEstimates count={readings.length} analysis={analysis} /> : null}
      {showChart ? (
        <View ref={setChartBox}>
          <LiveChart readings={drawn.current.readings} deliveryMap={deliveryMap} plan={plan} result={drawn.current.result} height={height} />
        </View>
      ) : null}
    </>
  );
});

/** The entry panel with the marks waiting for a value (it alone re-renders on a tap). */
const LiveEntry = memo(function LiveEntry({ rs, ...props }: { rs: RunStore } & Omit<EntryPanelProps, 'pending'>) {
  const pending = useOpenMarks(rs);
  return <EntryPanel pending={pending} {...props} />;
});

/** The readings table with the values being saved on top. */
const LiveTable = memo(function LiveTable({ rs, ...props }: { rs: RunStore } & Pick<ReadingsTableProps, 'volumeAt' | 'onCorrectReading' | 'onCorrectCheckpoint'>) {
  const readings = useReadings(rs);
  const checkpoints = useCheckpoints(rs);
  return <ReadingsTable readings={readings} checkpoints={checkpoints} savingFrom={rs} {...props} />;
});

const RunBadges = memo(function RunBadges({ status, localState, sleepWarning }: { status: ClockStatus; localState: Extract<BenchRun['local'], { status: 'ready' }> | null; sleepWarning: boolean }) {
  return (
    <View style={styles.badges}>
      <Badge tone={status === 'running' ? 'accent' : status === 'paused' ? 'warn' : 'neutral'} label={status === 'running' ? 'Clock running' : status === 'paused' ? 'Paused for refill' : 'Not started'} testID="run-status" />
      {localState ? <StorageBadge state={localState} /> : null}
      {sleepWarning ? <Badge tone="warn" label="Screen may sleep" testID="wake-state" /> : null}
    </View>
  );
});

/** Clock, start / pause / finish, the cadence cue, and the warning when the device slept. */
const RunControls = memo(function RunControls({ clockEvents, status, plan, onClock }: { clockEvents: ClockEvent[]; status: ClockStatus; plan: PlanResult | null; onClock: RunActions['clockAction'] }) {
  const live = status === 'running' || status === 'paused';
  const [confirmFinish, setConfirmFinish] = useState(false);
  const [cueOn, setCueOn] = useState(false);
  const [gap, setGap] = useState(0);
  const eventsRef = useRef(clockEvents);
  eventsRef.current = clockEvents;

  // Cue at the planned cadence, tighter near the predicted break.
  useEffect(() => {
    if (!cueOn || status !== 'running' || !plan?.ok) return;
    const p = plan.plan;
    let timer: ReturnType<typeof setTimeout>;
    const tick = () => {
      const t = elapsedS(eventsRef.current, monoNow());
      const gapS = cueIntervalS(p, t);
      playCue(gapS === p.cadenceNearBreakS);
      timer = setTimeout(tick, gapS * 1000);
    };
    timer = setTimeout(tick, cueIntervalS(p, elapsedS(eventsRef.current, monoNow())) * 1000);
    return () => clearTimeout(timer);
  }, [cueOn, status, plan]);

  // A device that slept may have stopped performance.now(): warn if the wall clock ran ahead of it.
  useEffect(() => {
    if (!live || typeof document === 'undefined') return;
    const check = () => setGap(sleepGapS(eventsRef.current, monoNow(), Date.now()));
    check();
    document.addEventListener('visibilitychange', check);
    return () => document.removeEventListener('visibilitychange', check);
  }, [live]);

  return (
    <Card style={styles.clockCard}>
      <ClockDisplay events={clockEvents} status={status} />
      {gap > 2 ? (
        <Text variant="caption" tone="warn" testID="clock-gap">
          The device clock ran {gap.toFixed(0)} s ahead of the run clock (the device may have slept). Add a burette checkpoint.
        </Text>
      ) : null}
      {status === 'ready' ? (
        <Button size="large" wide label="Start the clock with the drip" testID="start-run" onPress={() => void onClock('start')} />
      ) : confirmFinish ? (
        <View style={styles.row}>
          <Button kind="danger" size="large" label="Finish the run" testID="confirm-finish" onPress={() => void onClock('finish')} />
          <Button kind="secondary" size="large" label="Keep recording" onPress={() => setConfirmFinish(false)} />
        </View>
      ) : (
        <View style={styles.row}>
          {status === 'running' ? <Button kind="secondary" size="large" label="Pause (refill)" testID="pause-run" onPress={() => void onClock('pause')} /> : null}
          <Button kind="secondary" size="large" label="Finish…" testID="finish-run" onPress={() => setConfirmFinish(true)} />
          {cueSupported() ? (
            <Button
              kind={cueOn ? 'primary' : 'quiet'}
              label={cueOn ? 'Cue on' : 'Cue off'}
              testID="cue-toggle"
              accessibilityState={{ checked: cueOn }}
              onPress={() => {
                primeCue();
                setCueOn((c) => !c);
              }}
            />
          ) : null}
        </View>
      )}
    </Card>
  );
});

/** Stored readings so far and the analysis's current estimates. */
const LiveEstimates = memo(function LiveEstimates({ count, analysis }: { count: number; analysis: LiveAnalysis | null }) {
  const est = analysis?.result;
  return (
    <Card testID="live-estimate">
      <View style={styles.estimates}>
        <Estimate label="Readings" value={String(count)} testID="reading-count" />
        <Estimate label="Ve now" value={est?.equivalencePoints.length ? `${est.equivalencePoints.map((e) => e.volumeMl.toFixed(2)).join(', ')} mL` : '—'} testID="estimate-ve" />
        <Estimate label="pKa now" value={est?.pKa.length ? est.pKa.map((p) => p.toFixed(2)).join(', ') : '—'} testID="estimate-pka" />
      </View>
      {analysis?.error && count >= 7 ? <Text variant="caption" tone="muted">{analysis.error}</Text> : null}
    </Card>
  );
});

/** The curve so far on the volume axis, with the plan's prediction and the analysis's markers. */
const LiveChart = memo(function LiveChart({ readings, deliveryMap, plan, result, height }: { readings: readonly Effective<ReadingRow>[]; deliveryMap: DeliveryMap | null; plan: PlanResult | null; result: LiveResult | null; height: number }) {
  const points = useMemo(() => {
    if (!deliveryMap) return [];
    const out: { x: number; y: number }[] = [];
    for (const { current: r } of readings) if (r.pH !== null) out.push({ x: Math.max(0, deliveryMap.volumeAt(r.timeS)), y: r.pH });
    return out;
  }, [readings, deliveryMap]);
  const predicted = useMemo(() => (plan?.ok && plan.plan.curve ? plan.plan.curve.map((p) => ({ x: p.volumeMl, y: p.pH })) : undefined), [plan]);
  return (
    <Card title="Curve" testID="live-chart-card">
      <CurveChart readings={points} predicted={predicted} result={result} height={height} testID="live-chart" />
    </Card>
  );
});

// Memoised: a stored reading changes the count, not the estimates beside it.
const Estimate = memo(function Estimate({ label, value, testID }: { label: string; value: string; testID?: string }) {
  return (
    <View style={styles.estimate}>
      <Text variant="caption" tone="muted">
        {label}
      </Text>
      <Text variant="heading" numeric testID={testID}>
        {value}
      </Text>
    </View>
  );
});

function RefillPanel({ onResume }: { onResume: RunActions['clockAction'] }) {
  const [before, setBefore] = useState('');
  const [after, setAfter] = useState('');
  const [err, setErr] = useState<string | null>(null);
  const resume = () => {
    const b = numberOrUndefined(before);
    const a = numberOrUndefined(after);
    if (b === undefined && a === undefined) return void onResume('resume');
    if (b === undefined || a === undefined || Number.isNaN(b) || Number.isNaN(a) || b < 0 || a < 0 || b > 100 || a > 100) {
      setErr('Give both burette readings (0–100 mL), or leave both empty.');
      return;
    }
    void onResume('resume', { refill: { beforeMl: b, afterMl: a } });
  };
  return (
    <Card tone="warn" title="Paused for a refill" testID="refill-panel">
      <Text>The clock is stopped while the drip is stopped. Read the burette before and after filling, then resume with the drip.</Text>
      <Field label="Burette before refill" unit="mL" keyboardType="decimal-pad" value={before} onChangeText={setBefore} testID="refill-before" />
      <Field label="Burette after refill" unit="mL" keyboardType="decimal-pad" value={after} onChangeText={setAfter} testID="refill-after" error={err} />
      <Button size="large" label="Resume with the drip" testID="resume-run" onPress={resume} />
    </Card>
  );
}

const styles = StyleSheet.create({
  badges: { gap: space.xs, alignItems: 'flex-end' },
  clockCard: { alignItems: 'stretch', gap: space.sm },
  row: { flexDirection: 'row', gap: space.sm, flexWrap: 'wrap', justifyContent: 'center' },
  tapArea: { gap: space.md },
  columns: { flexDirection: 'row', gap: space.xl, alignItems: 'flex-start' },
  left: { width: 440, gap: space.md },
  right: { flex: 1, minWidth: 0, gap: space.md },
  estimates: { flexDirection: 'row', justifyContent: 'space-between', gap: space.md, flexWrap: 'wrap' },
  estimate: { minWidth: 90, gap: space.xxs, padding: space.xs, borderRadius: radius.sm, backgroundColor: colors.surface },
});
