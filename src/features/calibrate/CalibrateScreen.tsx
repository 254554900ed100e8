import { Link } from 'expo-router';
import { StyleSheet, View } from 'react-native';
import type { Burette, CalibrationOverview, DripCalibration, Electrode, TitrantLot } from '../../../shared/schemas/calibration-api';
import { useLayoutSize } from '../../theme/layout';
import { space } from '../../theme/tokens';
import { Badge, Button, Card, Screen, Text } from '../../ui';
import { dateTime, withUncertainty } from './forms';
import { HistoryTable } from './HistoryTable';
import { useQueryClient } from '@tanstack/react-query';
import type { Standardisation } from '../../../shared/schemas/calibration-api';
import { FilesCard } from '../files/FilesCard';
import { calibrationKeys, useActiveLab, useCalibrationFiles, useCalibrations } from './hooks';
import { ErrorNote, StatusBadge } from './parts';

const METHOD_LABEL: Record<DripCalibration['method'], string> = {
  gravimetric: 'Gravimetric',
  'mark-timing': 'Mark timing',
  'drop-count': 'Drop count',
};

function LinkButton({ href, label, kind = 'secondary', testID }: { href: string; label: string; kind?: 'primary' | 'secondary'; testID?: string }) {
  return (
    <Link href={href as never} asChild>
      <Button label={label} kind={kind} testID={testID} />
    </Link>
  );
}

function dripSummary(c: DripCalibration | undefined): string {
  if (!c) return 'No rate in force: calibrate this setting before a run.';
  return `${withUncertainty(c.rateMlPerS, c.uRateMlPerS, 'mL/s')} · ${METHOD_LABEL[c.method]} · until ${dateTime(c.expiresAt)}`;
}

function BuretteCard({ b, manager, wide }: { b: Burette; manager: boolean; wide: boolean }) {
  return (
    <Card
      title={b.identifier}
      aside={b.isDemo ? <Badge label="Demo" tone="accent" /> : undefined}
      testID={`burette-${b.identifier}`}
    >
      <Text tone="muted" variant="caption">
        {b.capacityMl} mL class {b.class}, tolerance ±{b.toleranceMl} mL ({b.toleranceSource})
      </Text>
      {b.settings.length === 0 ? <Text tone="muted">No drip settings yet.</Text> : null}
      {b.settings.map((s) => {
        const inForce = s.calibrations.find((c) => c.id === s.inForceId);
        const drops = s.calibrations.find((c) => c.id === s.inForceDropCountId);
        return (
          <View key={s.id} style={styles.block} testID={`setting-${s.id}`}>
            <View style={styles.line}>
              <Text variant="label">
                {s.stopcockSetting}
                {s.tip ? ` · ${s.tip}` : ''}
              </Text>
              {inForce ? <StatusBadge status="in-force" /> : <Badge label="No rate" tone="warn" />}
            </View>
            <Text numeric testID="setting-rate">
              {dripSummary(inForce)}
            </Text>
            {drops?.dropsPerMin ? (
              <Text variant="caption" tone="muted">
                {drops.dropsPerMin.toFixed(1)} drops/min
                {drops.dropVolumeMl ? `, ${drops.dropVolumeMl.toFixed(4)} mL per drop` : ''} (≈ 0.05 mL/drop is common practice)
              </Text>
            ) : null}
            {manager ? (
              <View style={styles.actions}>
                <LinkButton href={`/calibrate/gravimetric?settingId=${s.id}`} label="Gravimetric" kind="primary" testID="start-gravimetric" />
                <LinkButton href={`/calibrate/mark-timing?settingId=${s.id}`} label="Mark timing" />
                <LinkButton href={`/calibrate/drop-count?settingId=${s.id}`} label="Drop count" />
              </View>
            ) : null}
            {wide && manager ? (
              <HistoryTable
                rows={s.calibrations}
                empty="No calibrations yet."
                testID="drip-history"
                columns={[
                  { title: 'Date', width: 130, cell: (c) => dateTime(c.performedAt) },
                  { title: 'Method', width: 100, cell: (c) => METHOD_LABEL[c.method] },
                  {
                    title: 'Result',
                    width: 210,
                    cell: (c) => (c.method === 'drop-count' ? `${c.dropsPerMin?.toFixed(1)} drops/min` : withUncertainty(c.rateMlPerS, c.uRateMlPerS, 'mL/s')),
                  },
                  { title: 'By', width: 160, cell: (c) => c.performedByName ?? '—' },
                  { title: 'Expires', width: 130, cell: (c) => dateTime(c.expiresAt) },
                  { title: 'Status', width: 110, cell: (c) => <StatusBadge status={c.status} /> },
                  { title: 'Notes', width: 220, cell: (c) => c.acceptanceReasons.join('; ') || c.withdrawnReason || c.notes || '' },
                ]}
              />
            ) : null}
          </View>
        );
      })}
      {manager ? <LinkButton href={`/calibrate/new?kind=setting&buretteId=${b.id}`} label="Add a drip setting" /> : null}
    </Card>
  );
}

/** The newest standardisation's files: the certificate of the primary standard, a balance printout. */
function StandardisationFiles({ labId, s, canAttach }: { labId: string; s: Standardisation; canAttach: boolean }) {
  const qc = useQueryClient();
  const files = useCalibrationFiles(labId, s.id);
  return (
    <FilesCard
      inside
      title={`Files of the standardisation of ${dateTime(s.performedAt).slice(0, 10)}`}
      files={files.data ?? []}
      uploadPath={`/labs/${labId}/calibrations/${s.id}/attachments`}
      canAttach={canAttach}
      onUploaded={() => qc.invalidateQueries({ queryKey: calibrationKeys.files(labId, s.id) })}
      empty={files.isLoading ? 'Loading…' : 'No certificate or other file attached.'}
      attachLabel="Attach a certificate (PDF or photo)"
      testID="standardisation-files"
    />
  );
}

function LotCard({ l, manager, wide }: { l: TitrantLot; manager: boolean; wide: boolean }) {
  const { labId } = useActiveLab();
  const newest = l.standardisations.reduce<Standardisation | null>((a, s) => (!a || s.performedAt > a.performedAt ? s : a), null);
  return (
    <Card title={l.identifier} aside={l.isDemo ? <Badge label="Demo" tone="accent" /> : undefined} testID={`lot-${l.identifier}`}>
      <Text variant="caption" tone="muted">
        {l.titrant} ≈ {l.nominalConcentrationM} mol/L, prepared {dateTime(l.preparedAt).slice(0, 10)}
        {l.storage ? ` · ${l.storage}` : ''}
      </Text>
      {l.current ? (
        <View style={styles.block}>
          <View style={styles.line}>
            <Text variant="heading" numeric testID="lot-concentration">
              {withUncertainty(l.current.concentrationM, l.current.uConcentrationM, 'mol/L')}
            </Text>
            <StatusBadge status="in-force" />
          </View>
          <Text variant="caption" tone="muted">
            {l.current.n === 1 ? 'one standardisation' : `mean of ${l.current.n} standardisations`} · restandardise before{' '}
            {dateTime(l.current.validUntil)}
          </Text>
        </View>
      ) : (
        <Badge label="Not standardised" tone="warn" />
      )}
      {manager ? (
        <View style={styles.actions}>
          <LinkButton href={`/calibrate/standardise?lotId=${l.id}`} label="Standardise" kind="primary" testID="start-standardise" />
        </View>
      ) : null}
      {labId && newest ? <StandardisationFiles labId={labId} s={newest} canAttach={manager} /> : null}
      {wide && manager ? (
        <HistoryTable
          rows={l.standardisations}
          empty="No standardisations yet."
          testID="standardisation-history"
          columns={[
            { title: 'Date', width: 130, cell: (s) => dateTime(s.performedAt) },
            { title: 'Standard', width: 80, cell: (s) => s.standard },
            { title: 'm (g)', width: 80, cell: (s) => s.massG.toFixed(4) },
            { title: 'Ve (mL)', width: 80, cell: (s) => s.equivalenceVolumeMl.toFixed(2) },
            { title: 'c (mol/L)', width: 200, cell: (s) => withUncertainty(s.concentrationM, s.uConcentrationM, '') },
            { title: 'By', width: 160, cell: (s) => s.performedByName ?? '—' },
            { title: 'Status', width: 110, cell: (s) => <StatusBadge status={s.status} /> },
          ]}
        />
      ) : null}
    </Card>
  );
}

function ElectrodeCard({ e, manager, wide }: { e: Electrode; manager: boolean; wide: boolean }) {
  const inForce = e.calibrations.find((c) => c.id === e.inForceId);
  const latest = e.calibrations[0];
  return (
    <Card title={e.identifier} aside={e.isDemo ? <Badge label="Demo" tone="accent" /> : undefined} testID={`electrode-${e.identifier}`}>
      {inForce ? (
        <View style={styles.line}>
          <Text numeric>
            slope {inForce.slopePct.toFixed(1)} %, offset {inForce.offsetMv.toFixed(1)} mV at pH 7 · until {dateTime(inForce.expiresAt)}
          </Text>
          <StatusBadge status="in-force" />
        </View>
      ) : (
        <View style={styles.line}>
          <Text tone="warn">{latest ? `Latest calibration ${latest.status}: calibrate before a run.` : 'Not calibrated yet.'}</Text>
          <Badge label={latest?.status === 'failed' ? 'Failed' : 'Stale'} tone={latest?.status === 'failed' ? 'danger' : 'warn'} />
        </View>
      )}
      {manager ? (
        <View style={styles.actions}>
          <LinkButton href={`/calibrate/electrode?electrodeId=${e.id}`} label="Calibrate electrode" kind="primary" />
        </View>
      ) : null}
      {wide && manager ? (
        <HistoryTable
          rows={e.calibrations}
          empty="No calibrations yet."
          columns={[
            { title: 'Date', width: 130, cell: (c) => dateTime(c.performedAt) },
            { title: 't (°C)', width: 60, cell: (c) => c.temperatureC.toFixed(1) },
            { title: 'Buffers', width: 60, cell: (c) => String(c.points.length) },
            { title: 'Slope %', width: 80, cell: (c) => c.slopePct.toFixed(1) },
            { title: 'Offset mV', width: 90, cell: (c) => c.offsetMv.toFixed(1) },
            { title: 'By', width: 160, cell: (c) => c.performedByName ?? '—' },
            { title: 'Status', width: 110, cell: (c) => <StatusBadge status={c.status} /> },
            { title: 'Notes', width: 220, cell: (c) => c.acceptanceReasons.join('; ') || c.withdrawnReason || '' },
          ]}
        />
      ) : null}
    </Card>
  );
}

function Sections({ o, manager, wide }: { o: CalibrationOverview; manager: boolean; wide: boolean }) {
  return (
    <>
      <View style={styles.sectionHead}>
        <Text variant="heading" accessibilityRole="header" aria-level={2}>
          Burettes and drip rates
        </Text>
        {manager ? <LinkButton href="/calibrate/new?kind=burette" label="Add a burette" /> : null}
      </View>
      {o.burettes.length === 0 ? <Text tone="muted">No burettes registered.</Text> : null}
      {o.burettes.map((b) => (
        <BuretteCard key={b.id} b={b} manager={manager} wide={wide} />
      ))}
      <View style={styles.sectionHead}>
        <Text variant="heading" accessibilityRole="header" aria-level={2}>
          Titrant lots
        </Text>
        {manager ? <LinkButton href="/calibrate/new?kind=lot" label="Add a lot" testID="add-lot" /> : null}
      </View>
      {o.lots.length === 0 ? <Text tone="muted">No titrant lots registered.</Text> : null}
      {o.lots.map((l) => (
        <LotCard key={l.id} l={l} manager={manager} wide={wide} />
      ))}
      <View style={styles.sectionHead}>
        <Text variant="heading" accessibilityRole="header" aria-level={2}>
          Electrodes
        </Text>
        {manager ? <LinkButton href="/calibrate/new?kind=electrode" label="Add an electrode" /> : null}
      </View>
      {o.electrodes.length === 0 ? <Text tone="muted">No electrodes registered.</Text> : null}
      {o.electrodes.map((e) => (
        <ElectrodeCard key={e.id} e={e} manager={manager} wide={wide} />
      ))}
    </>
  );
}

export function CalibrateScreen() {
  const { labId, isManager, isDemo } = useActiveLab();
  const wide = useLayoutSize() === 'wide';
  const q = useCalibrations(labId);
  return (
    <Screen title="Calibrate" subtitle="Drip rates of each burette, titrant lots and their standardisations, electrodes." testID="screen-calibrate">
      {!labId ? (
        <Card>
          <Text>Sign in to see your lab’s calibrations.</Text>
          <LinkButton href="/sign-in" label="Sign in" />
        </Card>
      ) : null}
      {isDemo ? (
        <Card tone="accent">
          <Text variant="caption">Demo lab: every burette, lot and calibration here is invented.</Text>
        </Card>
      ) : null}
      {q.isPending && labId ? <Text tone="muted">Loading calibrations…</Text> : null}
      {q.error && !q.data ? <ErrorNote error={q.error} /> : null}
      {q.error && q.data ? (
        <Text variant="caption" tone="warn">
          Showing calibrations as of {dateTime(q.data.asOf)}: {(q.error as Error).message}
        </Text>
      ) : null}
      {q.data ? <Sections o={q.data} manager={isManager} wide={wide} /> : null}
    </Screen>
  );
}

const styles = StyleSheet.create({
  block: { gap: space.xs, paddingTop: space.sm },
  line: { flexDirection: 'row', alignItems: 'center', justifyContent: 'space-between', gap: space.sm, flexWrap: 'wrap' },
  actions: { flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' },
  sectionHead: { flexDirection: 'row', alignItems: 'center', justifyContent: 'space-between', gap: space.sm, flexWrap: 'wrap', marginTop: space.md },
});
