import { useMemo, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import type { AnalysisResult } from '../../../shared/schemas/run-document';
import { APPROVAL_MEANING, type RunDetail } from '../../../shared/schemas/desk';
import { colors, space } from '../../theme/tokens';
import { Badge, Button, Card, Field, Screen, Text } from '../../ui';
import { LineChart, type ChartMarker, type ChartSeries } from '../charts/LineChart';
import { LiveStatus } from './LiveStatus';
import { useLiveFollow } from './useLiveFollow';
import { useApprove, useComment, useReopen, useReturn, useRunDetail, useSubmit } from './api';
import { FilesCard } from '../files/FilesCard';
import { downloadFile } from '../files/transfer';
import { clockOffsetText } from '../../sync/describe';
import { methodLabel, num, when, withU } from './format';
import { useQueryClient } from '@tanstack/react-query';
import { keys } from '../../api/keys';

type XY = { x: number; y: number };

/** One report plot: the shared chart with its crosshair read-out and zoom (LineChart `interactive`). */
function PlotCard({ title, series, yLabel, yRightLabel, testID, markers }: { title: string; series: ChartSeries[]; yLabel: string; yRightLabel?: string; testID: string; markers?: ChartMarker[] }) {
  const n = series.reduce((k, s) => k + s.points.length, 0);
  if (!n) return null;
  return (
    <Card title={title} testID={testID}>
      <LineChart interactive series={series} markers={markers} xLabel="Volume of titrant (mL)" xUnit="mL" yLabel={yLabel} yRightLabel={yRightLabel} summary={`${title}, ${n} points.`} height={280} testID={`${testID}-chart`} />
    </Card>
  );
}

export function plotsOf(d: RunDetail) {
  const a = d.analysis as AnalysisResult | null;
  const inForce = d.readings.filter((r) => !r.supersededBy && r.kind !== 'deletion' && r.pH != null && r.volumeMl != null);
  const curve: XY[] = inForce.map((r) => ({ x: r.volumeMl!, y: r.pH! }));
  return {
    curve,
    derivative: (a?.derivative ?? []).map((p) => ({ x: p.volumeMl, y: p.dpHdV })),
    granBefore: (a?.gran.before ?? []).map((p) => ({ x: p.volumeMl, y: p.value })),
    granAfter: (a?.gran.after ?? []).map((p) => ({ x: p.volumeMl, y: p.value })),
    residuals: a?.fit ? a.fit.residuals.map((y, i) => ({ x: a.volumesMl[i] ?? i, y })) : [],
  };
}

/** The series of the report's plots, with the equivalence point(s) marked on the curve and its derivative. */
function reportSeries(d: RunDetail) {
  const p = plotsOf(d);
  const a = d.analysis as AnalysisResult | null;
  const markers: ChartMarker[] = (a?.equivalencePoints ?? []).map((e) => ({ x: e.volumeMl, label: `Ve ${num(e.volumeMl, 4)} mL` }));
  return {
    markers,
    curve: [{ id: 'pH', label: 'pH', points: p.curve, color: colors.curve, dots: true }],
    derivative: [{ id: 'd', label: 'dpH/dV', points: p.derivative, color: colors.derivative }],
    gran: [
      { id: 'gb', label: 'before Ve', points: p.granBefore, color: colors.acid, dots: true },
      // Values after Ve are orders of magnitude larger: their own axis, as on the bench (TitrationCharts GranChart).
      { id: 'ga', label: 'after Ve', points: p.granAfter, color: colors.base, dots: true, axis: 'right' },
    ],
    residuals: [{ id: 'res', label: 'residual', points: p.residuals, color: colors.fit, dots: true }],
  } satisfies Record<string, ChartSeries[] | ChartMarker[]>;
}

export function RunReportScreen({ runId }: { runId: string }) {
  const q = useRunDetail(runId);
  const d = q.data;
  if (!d) {
    return (
      <Screen title="Run report" testID="screen-run-report">
        <Card>
          <Text tone={q.error ? 'danger' : 'muted'}>{q.error ? (q.error as Error).message : 'Loading…'}</Text>
        </Card>
      </Screen>
    );
  }
  return <Report d={d} />;
}

function Report({ d }: { d: RunDetail }) {
  const a = d.analysis as AnalysisResult | null;
  const series = useMemo(() => reportSeries(d), [d]);
  const live = useLiveFollow(d.run.id, d.run.status);
  const following = live.mode !== 'stopped';
  const [busy, setBusy] = useState<string | null>(null);
  const [err, setErr] = useState<string | null>(null);
  const run = async (label: string, f: () => Promise<unknown>) => {
    setBusy(label);
    setErr(null);
    try {
      await f();
    } catch (e) {
      setErr((e as Error).message);
    } finally {
      setBusy(null);
    }
  };
  return (
    <Screen title={d.run.sampleName} subtitle={`${d.run.analystName} · ${when(d.run.createdAt)} UTC · revision ${d.revision.revision}${d.run.isDemo ? ' · demo data' : ''}`} testID="screen-run-report">
      <View style={styles.row}>
        <Badge label={d.run.status} tone={d.run.status === 'approved' ? 'ok' : d.run.status === 'submitted' ? 'accent' : 'neutral'} testID="run-status" />
        {d.revision.lockedAt && <Badge label={`locked ${when(d.revision.lockedAt)}`} tone="ok" />}
      </View>
      {d.clockFlags.map((f) => (
        <Text key={f.deviceId} tone="warn" variant="caption" testID="clock-flag">
          ⚠ A device that recorded this run had its clock {clockOffsetText(f.offsetMs)} when it synced (noticed {when(f.flaggedAt)} UTC). Readings are
          placed by the run clock and the server's receipt, never by the device's calendar; device times may be off.
        </Text>
      ))}
      <LiveStatus live={live} readings={d.readings} />
      <ReviewCard d={d} />
      <Card title={following ? 'Live estimates' : 'Results'} testID="results-card">
        {following && (
          <Text variant="caption" tone="muted">
            The run is still being recorded: these numbers are worked out again as each reading arrives.
          </Text>
        )}
        {a ? (
          <View testID="results">
            {a.equivalencePoints.map((e) => (
              <Text key={`ve${e.step}`} numeric>Equivalence volume{a.equivalencePoints.length > 1 ? ` ${e.step}` : ''}: {withU(e.volumeMl, e.uMl, 'mL')} ({methodLabel(e.method)})</Text>
            ))}
            {a.pKa.map((p, i) => (
              <Text key={`pka${i}`} numeric>pKa{a.pKa.length > 1 ? i + 1 : ''}: {withU(p, a.pKaU[i])} ({a.fit ? 'whole-curve fit' : 'half-equivalence'}); Ka {num(a.Ka[i], 3)} mol/L</Text>
            ))}
            {a.molarMassGPerMol != null && <Text numeric>Molar mass: {withU(a.molarMassGPerMol, a.molarMassU, 'g/mol')}</Text>}
            {a.analyteConcentrationM != null && <Text numeric>Concentration: {withU(a.analyteConcentrationM, a.analyteConcentrationU, 'mol/L')}</Text>}
            <Text variant="label">Methods</Text>
            {a.methods.map((m, i) => (
              <Text key={i} variant="caption" numeric>{methodLabel(m.method)}{a.equivalencePoints.length > 1 ? ` (step ${m.step})` : ''}: {withU(m.volumeMl, m.uMl, 'mL')}{m.note ? ` — ${m.note}` : ''}</Text>
            ))}
            {a.warnings.map((w) => (
              <Text key={w} tone="warn" variant="caption">⚠ {w}</Text>
            ))}
          </View>
        ) : (
          <Text tone="muted">{d.analysisError ?? 'No analysis yet.'}</Text>
        )}
      </Card>
      <PlotCard title="pH against volume" testID="plot-curve" yLabel="pH" series={series.curve} markers={series.markers} />
      <PlotCard title="Derivative" testID="plot-derivative" yLabel="dpH/dV (per mL)" series={series.derivative} markers={series.markers} />
      <PlotCard title="Gran plot" testID="plot-gran" yLabel="V·10^−pH (before Ve)" yRightLabel="(V0+V)·10^(pH−pKw) (after Ve)" series={series.gran} />
      <PlotCard title="Fit residuals" testID="plot-residuals" yLabel="pH residual (fit − measured)" series={series.residuals} />
      <Card title="Calibrations and titrant used">
        {d.calibrations.map((c) => (
          <Text key={c.kind}>
            <Text variant="label">{c.label}: </Text>
            {c.value} — <Text tone={c.state.includes('older') ? 'warn' : 'muted'}>{c.state}</Text>
          </Text>
        ))}
      </Card>
      <Card title="Exports">
        <View style={styles.row}>
          <Button label="Readings CSV" kind="secondary" busy={busy === 'r'} onPress={() => run('r', () => downloadFile(`/runs/${d.run.id}/export/readings.csv`, 'readings.csv'))} testID="export-readings" />
          <Button label="Results CSV" kind="secondary" busy={busy === 's'} onPress={() => run('s', () => downloadFile(`/runs/${d.run.id}/export/results.csv`, 'results.csv'))} testID="export-results" />
          <Button label="PDF report" kind="secondary" busy={busy === 'p'} onPress={() => run('p', () => downloadFile(`/runs/${d.run.id}/export/report.pdf`, 'report.pdf'))} testID="export-pdf" />
        </View>
        {err && <Text tone="danger">{err}</Text>}
      </Card>
      <Attachments d={d} />
      <Card title={`Readings (${d.readings.length} records)`}>
        <View testID="readings-table">
          <View style={[styles.tr, styles.th]}>
            {['time (s)', 'volume (mL)', 'pH', 'mV', 'record'].map((h) => (
              <Text key={h} variant="label" style={styles.cell}>{h}</Text>
            ))}
          </View>
          {d.readings.map((r) => (
            <View key={r.id} style={[styles.tr, r.supersededBy ? styles.superseded : null]} testID={`report-reading-${r.id}`}>
              <Text numeric style={styles.cell}>{num(r.timeS, 6)}</Text>
              <Text numeric style={styles.cell}>{num(r.volumeMl, 5)}</Text>
              <Text numeric style={[styles.cell, r.supersededBy ? styles.strike : null]}>{num(r.pH, 4)}</Text>
              <Text numeric style={styles.cell}>{num(r.mV, 4)}</Text>
              <Text variant="caption" style={styles.cell} tone={r.replacesId ? 'warn' : 'muted'}>
                {r.kind === 'deletion' ? `withdrawn: ${r.reason}` : r.replacesId ? `correction: ${r.reason}` : r.supersededBy ? 'superseded' : 'reading'}
              </Text>
            </View>
          ))}
        </View>
      </Card>
      <Comments d={d} />
      <Card title="History">
        {d.history.map((h, i) => (
          <Text key={i} variant="caption">{when(h.at)} · {h.actorName ?? 'device'} · {h.detail}</Text>
        ))}
      </Card>
    </Screen>
  );
}

function ReviewCard({ d }: { d: RunDetail }) {
  const submit = useSubmit(d.run.id);
  const ret = useReturn(d.run.id);
  const approve = useApprove(d.run.id);
  const reopen = useReopen(d.run.id);
  const [password, setPassword] = useState('');
  const [comment, setComment] = useState('');
  const error = [submit, ret, approve, reopen].find((m) => m.error)?.error as Error | undefined;
  if (!d.can.submit && !d.can.review && !d.can.reopen && !d.review.length) return null;
  return (
    <Card title="Review" testID="review-card">
      {d.review.map((r) => (
        <Text key={r.id} variant="caption">{when(r.at)} · {r.kind} by {r.actorName}{r.comment ? `: ${r.comment}` : ''}{r.meaning ? ` — ${r.meaning}` : ''}</Text>
      ))}
      {d.can.submit && <Button label="Submit for review" busy={submit.isPending} onPress={() => submit.mutate({ note: '' })} testID="review-submit" />}
      {d.can.review && (
        <View style={{ gap: space.sm }}>
          <Text tone="muted" variant="caption">Approving signs this run: {APPROVAL_MEANING}</Text>
          <Field label="Comment (needed to return)" value={comment} onChangeText={setComment} testID="review-comment" />
          <Field label="Your password (to sign)" value={password} onChangeText={setPassword} secureTextEntry testID="review-password" />
          <View style={styles.row}>
            <Button label="Approve" busy={approve.isPending} disabled={!password} onPress={() => approve.mutate({ password, comment }, { onSettled: () => setPassword('') })} testID="review-approve" />
            <Button label="Return to analyst" kind="secondary" busy={ret.isPending} disabled={!comment.trim()} onPress={() => ret.mutate({ comment })} testID="review-return" />
          </View>
        </View>
      )}
      {d.can.reopen && <Button label="Open a new revision" kind="secondary" onPress={() => reopen.mutate({ reason: comment || 'Change after approval' })} testID="review-reopen" />}
      {error && <Text tone="danger" testID="review-error">{error.message}</Text>}
    </Card>
  );
}

function Comments({ d }: { d: RunDetail }) {
  const add = useComment(d.run.id);
  const [body, setBody] = useState('');
  return (
    <Card title="Comments" testID="comments">
      {d.comments.map((c) => (
        <Text key={c.id}><Text variant="label">{c.authorName}</Text> <Text variant="caption" tone="muted">{when(c.createdAt)}</Text>{'\n'}{c.body}</Text>
      ))}
      <Field label="Add a comment" value={body} onChangeText={setBody} multiline testID="comment-body" />
      <Button label="Post comment" disabled={!body.trim()} busy={add.isPending} onPress={() => add.mutate({ body }, { onSuccess: () => setBody('') })} testID="comment-post" />
      {add.error && <Text tone="danger">{(add.error as Error).message}</Text>}
    </Card>
  );
}

function Attachments({ d }: { d: RunDetail }) {
  const qc = useQueryClient();
  return <FilesCard files={d.attachments} uploadPath={`/runs/${d.run.id}/attachments`} canAttach={d.can.attach} onUploaded={() => qc.invalidateQueries({ queryKey: keys.run(d.run.id) })} />;
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', flexWrap: 'wrap', gap: space.sm, alignItems: 'flex-end' },
  tr: { flexDirection: 'row', borderBottomWidth: 1, borderBottomColor: colors.grid, minHeight: 32, alignItems: 'center' },
  th: { borderBottomColor: colors.lineStrong },
  cell: { flex: 1 },
  superseded: { backgroundColor: colors.sunken },
  strike: { textDecorationLine: 'line-through' },
});
