// One run on the bench: before the start (plan, start button), while the clock runs (tap, type, live curve), and
// after the finish (results, notes, submit for review).
import { router } from 'expo-router';
import { useCallback, useDeferredValue, useEffect, useMemo, useRef, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import type { CheckpointRow, MarkRow, ReadingRow } from '../../local/types';
import { useLayoutSize } from '../../theme/layout';
import { colors, radius, space } from '../../theme/tokens';
import { Badge, Button, Card, Screen, Text } from '../../ui';
import { CurveChart } from '../charts/TitrationCharts';
import { elapsedS, sleepGapS } from './clock';
import { ClockDisplay } from './ClockDisplay';
import { monoNow } from './clockSource';
import { cueSupported, playCue, primeCue } from './cue';
import type { Effective } from './effective';
import { EntryPanel } from './EntryPanel';
import { parseEntry } from './keypad';
import { LocalGate, StorageBadge } from './LocalGate';
import { MarkTargets } from './MarkTargets';
import { cueIntervalS } from './plan';
import { PlanCard } from './PlanCard';
import { ReadingsTable } from './ReadingsTable';
import { RunReview } from './RunReview';
import { SafetyNote } from './SafetyNote';
import { readingValue, useBenchRun, type BenchRun } from './useBenchRun';
import { useLiveAnalysis } from './useLiveAnalysis';
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
  if (run.record === undefined) return <Screen title="Run" testID="screen-run"><Text tone="muted">Opening the run…</Text></Screen>;
  if (run.record === null) {
    return (
      <Screen title="Run not found" testID="screen-run">
        <Text>This run is not on this device.</Text>
        <Button label="Back to the bench" onPress={() => router.replace('/bench')} />
      </Screen>
    );
  }
  if (!run.setup?.ok) {
    return (
      <Screen title={run.record.run.label} testID="screen-run">
        <Card tone="danger" title="The stored setup of this run is not readable">
          <Text>{run.setup?.error}</Text>
        </Card>
      </Screen>
    );
  }
  if (run.status === 'finished') return <RunReview run={run} />;
  return <RunBench run={run} />;
}

function RunBench({ run }: { run: BenchRun }) {
  const size = useLayoutSize();
  const wide = size === 'wide';
  const setup = run.setup?.ok ? run.setup.setup : null!;
  const live = run.status === 'running' || run.status === 'paused';
  const wake = useScreenAwake(live);
  // The curve and the analysis follow a moment behind the taps: React renders them after the urgent update
  // (the new mark or row), so a long run never delays what the finger just did.
  const deferredReadings = useDeferredValue(run.readings);
  const deferredDoc = useDeferredValue(run.built?.doc ?? null);
  const analysis = useLiveAnalysis(deferredDoc, run.status === 'running' || run.status === 'paused');
  const [confirmFinish, setConfirmFinish] = useState(false);
  const [cueOn, setCueOn] = useState(false);
  const [gap, setGap] = useState(0);
  const localState = run.local.status === 'ready' ? run.local : null;

  const points = useMemo(() => {
    const map = run.deliveryMap;
    if (!map) return [];
    const out: { x: number; y: number }[] = [];
    for (const { current: r } of deferredReadings) if (r.pH !== null) out.push({ x: Math.max(0, map.volumeAt(r.timeS)), y: r.pH });
    return out;
  }, [deferredReadings, run.deliveryMap]);
  const predicted = useMemo(() => (run.plan?.ok && run.plan.plan.curve ? run.plan.plan.curve.map((p) => ({ x: p.volumeMl, y: p.pH })) : undefined), [run.plan]);
  const volumeAt = useCallback((t: number) => (run.deliveryMap ? Math.max(0, run.deliveryMap.volumeAt(t)) : null), [run.deliveryMap]);

  // Cue at the planned cadence, tighter near the predicted break.
  const eventsRef = useRef(run.clockEvents);
  eventsRef.current = run.clockEvents;
  useEffect(() => {
    if (!cueOn || run.status !== 'running' || !run.plan?.ok) return;
    const plan = run.plan.plan;
    let timer: ReturnType<typeof setTimeout>;
    const tick = () => {
      const t = elapsedS(eventsRef.current, monoNow());
      const gapS = cueIntervalS(plan, t);
      playCue(gapS === plan.cadenceNearBreakS);
      timer = setTimeout(tick, gapS * 1000);
    };
    timer = setTimeout(tick, cueIntervalS(plan, elapsedS(eventsRef.current, monoNow())) * 1000);
    return () => clearTimeout(timer);
  }, [cueOn, run.status, run.plan]);

  // A device that slept may have stopped performance.now(): warn if the wall clock ran ahead of it.
  useEffect(() => {
    if (!live || typeof document === 'undefined') return;
    const check = () => setGap(sleepGapS(eventsRef.current, monoNow(), Date.now()));
    check();
    document.addEventListener('visibilitychange', check);
    return () => document.removeEventListener('visibilitychange', check);
  }, [live]);

  const onMark = useCallback((kind: 'reading' | 'checkpoint', monoMs: number) => void run.mark(kind, monoMs), [run.mark]);
  const onReading = useCallback((m: MarkRow, mode: 'pH' | 'mV', value: number) => run.enterReading(m, readingValue(setup, mode, value)), [run.enterReading, setup]);
  const onCorrectReading = useCallback(
    (eff: Effective<ReadingRow>, pH: number | null, reason: string) => {
      if (pH !== null) {
        const p = parseEntry(String(pH), 'pH');
        if (!p.ok) return Promise.resolve(undefined);
      }
      return run.correctReading(eff, pH === null ? null : { pH, mV: null, pHSource: 'typed' }, reason).then((x) => (x === undefined ? true : x));
    },
    [run.correctReading],
  );
  const onCorrectCheckpoint = useCallback((eff: Effective<CheckpointRow>, ml: number | null, reason: string) => run.correctCheckpoint(eff, ml, reason).then(() => true), [run.correctCheckpoint]);

  const status = run.status;
  const header = (
    <View style={styles.badges}>
      <Badge tone={status === 'running' ? 'accent' : status === 'paused' ? 'warn' : 'neutral'} label={status === 'running' ? 'Clock running' : status === 'paused' ? 'Paused for refill' : 'Not started'} testID="run-status" />
      {localState ? <StorageBadge state={localState} /> : null}
      {live && wake !== 'held' ? <Badge tone="warn" label="Screen may sleep" testID="wake-state" /> : null}
    </View>
  );

  const controls = (
    <Card style={styles.clockCard}>
      <ClockDisplay events={run.clockEvents} status={status} />
      {gap > 2 ? (
        <Text variant="caption" tone="warn" testID="clock-gap">
          The device clock ran {gap.toFixed(0)} s ahead of the run clock (the device may have slept). Add a burette checkpoint.
        </Text>
      ) : null}
      {status === 'ready' ? (
        <Button size="large" wide label="Start the clock with the drip" testID="start-run" onPress={() => void run.clockAction('start')} />
      ) : confirmFinish ? (
        <View style={styles.row}>
          <Button kind="danger" size="large" label="Finish the run" testID="confirm-finish" onPress={() => void run.clockAction('finish')} />
          <Button kind="secondary" size="large" label="Keep recording" onPress={() => setConfirmFinish(false)} />
        </View>
      ) : (
        <View style={styles.row}>
          {status === 'running' ? <Button kind="secondary" size="large" label="Pause (refill)" testID="pause-run" onPress={() => void run.clockAction('pause')} /> : null}
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

  const tapArea =
    status === 'paused' ? (
      <RefillPanel onResume={(refill) => void run.clockAction('resume', { refill })} />
    ) : status === 'running' ? (
      <View style={styles.tapArea}>
        <MarkTargets disabled={false} onMark={onMark} layout={wide ? 'wide' : 'phone'} />
        <EntryPanel pending={run.pending} hasElectrode={Boolean(setup.electrode)} onReading={onReading} onCheckpoint={run.enterCheckpoint} onDiscard={run.discardMark} />
      </View>
    ) : null;

  const est = analysis?.result;
  const estimates = live ? (
    <Card testID="live-estimate">
      <View style={styles.estimates}>
        <Estimate label="Readings" value={String(run.readings.length)} testID="reading-count" />
        <Estimate label="Ve now" value={est?.equivalencePoints.length ? `${est.equivalencePoints.map((e) => e.volumeMl.toFixed(2)).join(', ')} mL` : '—'} testID="estimate-ve" />
        <Estimate label="pKa now" value={est?.pKa.length ? est.pKa.map((p) => p.toFixed(2)).join(', ') : '—'} testID="estimate-pka" />
      </View>
      {analysis?.error && run.readings.length >= 7 ? <Text variant="caption" tone="muted">{analysis.error}</Text> : null}
    </Card>
  ) : null;

  const chart = (
    <Card title="Curve" testID="live-chart-card">
      <CurveChart readings={points} predicted={predicted} result={est ?? null} height={wide ? 320 : 240} testID="live-chart" />
    </Card>
  );
  const table = <ReadingsTable readings={run.readings} checkpoints={run.checkpoints} volumeAt={volumeAt} onCorrectReading={onCorrectReading} onCorrectCheckpoint={onCorrectCheckpoint} />;
  const errorBar = run.writeError ? (
    <Card tone="danger" testID="write-error">
      <Text accessibilityRole="alert">{run.writeError}</Text>
      <Button kind="secondary" label="Dismiss" onPress={run.clearWriteError} />
    </Card>
  ) : null;

  const before =
    status === 'ready' ? (
      <>
        <PlanCard plan={run.plan} />
        <SafetyNote compact />
      </>
    ) : null;

  return (
    <Screen title={run.record!.run.label} subtitle={status === 'ready' ? 'Fill the burette, read the start, start the drip and the clock together.' : undefined} actions={header} testID="screen-run">
      {errorBar}
      {wide ? (
        <View style={styles.columns}>
          <View style={styles.left}>
            {controls}
            {tapArea}
          </View>
          <View style={styles.right}>
            {estimates}
            {status === 'ready' ? before : chart}
            {status !== 'ready' ? table : null}
          </View>
        </View>
      ) : (
        <>
          {controls}
          {tapArea}
          {estimates}
          {status === 'ready' ? before : chart}
          {status !== 'ready' ? table : null}
        </>
      )}
    </Screen>
  );
}

function Estimate({ label, value, testID }: { label: string; value: string; testID?: string }) {
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
}

function RefillPanel({ onResume }: { onResume(refill?: { beforeMl: number; afterMl: number }): void }) {
  const [before, setBefore] = useState('');
  const [after, setAfter] = useState('');
  const [err, setErr] = useState<string | null>(null);
  const resume = () => {
    const b = numberOrUndefined(before);
    const a = numberOrUndefined(after);
    if (b === undefined && a === undefined) return onResume();
    if (b === undefined || a === undefined || Number.isNaN(b) || Number.isNaN(a) || b < 0 || a < 0 || b > 100 || a > 100) {
      setErr('Give both burette readings (0–100 mL), or leave both empty.');
      return;
    }
    onResume({ beforeMl: b, afterMl: a });
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
