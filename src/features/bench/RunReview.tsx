// After the finish: the engine's result with its plots and numbers, notes, and "submit for review" (marked in the
// local database and queued in the outbox; the sync carries it to the lab).
import { router } from 'expo-router';
import { useEffect, useMemo, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { useLayoutSize } from '../../theme/layout';
import { colors, space } from '../../theme/tokens';
import { Badge, Button, Card, Field, Screen, Text } from '../../ui';
import { LineChart } from '../charts/LineChart';
import { CurveChart, GranChart } from '../charts/TitrationCharts';
import { elapsedS, formatClock } from './clock';
import { sci, withU } from './format';
import { ReadingsTable } from './ReadingsTable';
import { useRunView, type BenchRun } from './useBenchRun';
import { analyse } from './liveAnalysis';

export function RunReview({ run: bench }: { run: BenchRun }) {
  const run = useRunView(bench);
  const wide = useLayoutSize() === 'wide';
  const record = run.record!;
  const setup = run.setup?.ok ? run.setup.setup : null!;
  const analysis = useMemo(() => analyse(run.built?.doc ?? null), [run.built]);
  const r = analysis?.result ?? null;
  const [notes, setNotes] = useState(record.run.notes);
  const [saved, setSaved] = useState(true);
  const [waiting, setWaiting] = useState<number | null>(null);
  const submitted = record.run.status === 'submitted';
  const duration = elapsedS(run.clockEvents, 0);

  useEffect(() => {
    if (!run.store) return;
    void run.store.outboxCounts().then((c) => setWaiting(c.pending + c.sent));
  }, [run.store, record]);

  const points = useMemo(() => (r ? r.volumesMl.map((v, i) => ({ x: v, y: run.built!.doc!.readings[i].pH })) : []), [r, run.built]);
  const derivative = useMemo(() => (r ? [{ id: 'd', label: 'dpH/dV', points: r.derivative.map((d) => ({ x: d.volumeMl, y: d.dpHdV })), color: colors.derivative }] : []), [r]);
  const volumeAt = (t: number) => (run.deliveryMap ? Math.max(0, run.deliveryMap.volumeAt(t)) : null);

  const numbers = r ? (
    <Card title="Result" testID="result-card" aside={<Badge tone={submitted ? 'ok' : 'neutral'} label={submitted ? 'Submitted for review' : 'Not submitted'} testID="review-state" />}>
      {r.equivalencePoints.map((e) => (
        <Row key={`ve${e.step}`} label={`Equivalence volume${r.equivalencePoints.length > 1 ? ` ${e.step}` : ''}`} value={withU(e.volumeMl, e.uMl, 'mL')} testID={`result-ve-${e.step}`} />
      ))}
      {r.pKa.map((p, i) => (
        <Row key={`pka${i}`} label={`pKa${r.pKa.length > 1 ? i + 1 : ''}`} value={withU(p, r.pKaU[i])} testID={`result-pka-${i + 1}`} />
      ))}
      {r.Ka.map((k, i) => (
        <Row key={`ka${i}`} label={`Ka${r.Ka.length > 1 ? i + 1 : ''}`} value={sci(k, r.KaU[i])} />
      ))}
      {r.molarMassGPerMol !== null ? <Row label="Molar mass" value={withU(r.molarMassGPerMol, r.molarMassU, 'g/mol')} testID="result-molar-mass" /> : null}
      {r.analyteConcentrationM !== null ? <Row label="Acid concentration" value={withU(r.analyteConcentrationM, r.analyteConcentrationU, 'mol/L')} testID="result-concentration" /> : null}
      {r.purity !== null ? <Row label="Purity" value={withU(r.purity * 100, r.purityU !== null ? r.purityU * 100 : null, '%')} /> : null}
      <Row label="Readings used" value={`${run.built?.doc?.readings.length ?? 0} of ${run.readings.length}, over ${formatClock(duration)}`} />
      <Row label="Temperature" value={`${r.temperatureC} °C (pKw ${r.pKw.toFixed(3)})`} />
      {r.equivalencePoints.length === 0 ? <Text tone="warn">No equivalence point found in these readings.</Text> : null}
    </Card>
  ) : (
    <Card tone="warn" title="No result" testID="result-card">
      <Text>{analysis?.error ?? 'No readings with a pH were recorded.'}</Text>
    </Card>
  );

  const warnings = [...(r?.warnings ?? []), ...(run.built?.notes ?? [])];
  const warningCard = warnings.length ? (
    <Card tone="warn" title="Warnings" testID="result-warnings">
      {warnings.map((w) => (
        <Text key={w} variant="caption">
          • {w}
        </Text>
      ))}
    </Card>
  ) : null;

  const plots = r ? (
    <>
      <Card title="Titration curve">
        <CurveChart readings={points} result={r} height={wide ? 320 : 260} testID="result-curve" />
      </Card>
      <Card title="First derivative">
        <LineChart series={derivative} markers={r.equivalencePoints.map((e) => ({ x: e.volumeMl, label: `Ve ${e.volumeMl.toFixed(2)}` }))} xLabel="Volume of titrant (mL)" yLabel="dpH/dV (per mL)" height={220} summary="First derivative of pH against volume." testID="result-derivative" />
      </Card>
      {r.gran.before.length || r.gran.after.length ? (
        <Card title="Gran plot">
          <GranChart gran={r.gran} height={220} testID="result-gran" />
        </Card>
      ) : null}
    </>
  ) : null;

  const notesCard = (
    <Card title="Notes" testID="notes-card">
      <Field
        label="Notes for the reviewer"
        multiline
        value={notes}
        onChangeText={(t) => {
          setNotes(t);
          setSaved(false);
        }}
        testID="run-notes"
        hint={saved ? 'Saved on this device.' : 'Not saved yet.'}
      />
      <Button
        kind="secondary"
        label="Save notes"
        testID="save-notes"
        disabled={saved}
        onPress={async () => {
          if ((await run.saveNotes(notes)) !== undefined || !run.writeError) setSaved(true);
        }}
      />
    </Card>
  );

  const submitCard = (
    <Card tone={submitted ? 'ok' : 'plain'} title={submitted ? 'Submitted for review' : 'Submit for review'} testID="submit-card">
      {submitted ? (
        <Text testID="submit-state">
          Marked as submitted on this device and queued for the lab{waiting !== null ? ` (${waiting} change${waiting === 1 ? '' : 's'} waiting to sync)` : ''}.
        </Text>
      ) : (
        <>
          <Text tone="muted">A reviewer in your lab checks the run once it reaches the lab. Readings cannot be edited after submitting; corrections stay possible, with a reason.</Text>
          <Button size="large" label="Submit for review" testID="submit-run" onPress={() => void run.submit()} disabled={!saved} />
          {!saved ? <Text variant="caption" tone="warn">Save the notes first.</Text> : null}
        </>
      )}
      <Button kind="quiet" label="Back to the bench" onPress={() => router.push('/bench')} testID="back-to-bench" />
    </Card>
  );

  return (
    <Screen title={record.run.label} subtitle={`Finished · ${setup.sample.massG !== undefined ? `${setup.sample.massG} g in ` : ''}${setup.sample.volumeMl} mL · NaOH ${setup.titrant.concentrationM} mol/L`} testID="screen-review">
      {run.writeError ? (
        <Card tone="danger">
          <Text accessibilityRole="alert">{run.writeError}</Text>
        </Card>
      ) : null}
      {wide ? (
        <View style={styles.columns}>
          <View style={styles.left}>
            {numbers}
            {warningCard}
            {notesCard}
            {submitCard}
          </View>
          <View style={styles.right}>{plots}</View>
        </View>
      ) : (
        <>
          {numbers}
          {warningCard}
          {plots}
          {notesCard}
          {submitCard}
        </>
      )}
      <Card title="Readings">
        <ReadingsTable
          readings={run.readings}
          checkpoints={run.checkpoints}
          volumeAt={volumeAt}
          limit={40}
          onCorrectReading={submitted ? undefined : (eff, pH, reason) => run.correctReading(eff, pH === null ? null : { pH, mV: null, pHSource: 'typed' }, reason)}
          onCorrectCheckpoint={submitted ? undefined : (eff, ml, reason) => run.correctCheckpoint(eff, ml, reason)}
        />
      </Card>
    </Screen>
  );
}

function Row({ label, value, testID }: { label: string; value: string; testID?: string }) {
  return (
    <View style={styles.resultRow}>
      <Text tone="muted" style={styles.resultLabel}>
        {label}
      </Text>
      <Text variant="heading" numeric testID={testID} style={styles.resultValue}>
        {value}
      </Text>
    </View>
  );
}

const styles = StyleSheet.create({
  columns: { flexDirection: 'row', gap: space.xl, alignItems: 'flex-start' },
  left: { width: 440, gap: space.md },
  right: { flex: 1, minWidth: 0, gap: space.md },
  resultRow: { flexDirection: 'row', justifyContent: 'space-between', alignItems: 'baseline', gap: space.md, flexWrap: 'wrap', borderBottomWidth: 1, borderBottomColor: colors.grid, paddingVertical: space.xs },
  resultLabel: { flexShrink: 1 },
  resultValue: { textAlign: 'right' },
});
