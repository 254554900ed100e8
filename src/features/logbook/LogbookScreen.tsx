import { router } from 'expo-router';
import { useState } from 'react';
import { Pressable, StyleSheet, useWindowDimensions, View } from 'react-native';
import { RUN_STATUSES, type RunListQuery, type RunRow, type RunSort } from '../../../shared/schemas/desk';
import { colors, space, breakpoints } from '../../theme/tokens';
import { Badge, Button, Card, Field, Screen, Text } from '../../ui';
import { useActiveLab, useRunsList } from './api';
import { day, num } from './format';

const statusTone = (s: string) => (s === 'approved' ? 'ok' : s === 'submitted' ? 'accent' : s === 'returned' ? 'warn' : 'neutral') as 'ok';

// minWidth keeps a date ("2026-03-14", tabular figures) on one line however narrow the desk window; a browser
// would otherwise break it at a hyphen.
const COLUMNS: { key: RunSort | null; label: string; flex: number; minWidth?: number }[] = [
  { key: 'sample', label: 'Sample', flex: 3 },
  { key: 'analyst', label: 'Analyst', flex: 2 },
  { key: 'date', label: 'Date', flex: 1.2, minWidth: 120 },
  { key: 've', label: 'Ve (mL)', flex: 1 },
  { key: 'pka', label: 'pKa', flex: 0.8 },
  { key: null, label: 'Result', flex: 1.4 },
  { key: 'status', label: 'Status', flex: 1.2 },
  { key: null, label: 'Sync', flex: 1.4, minWidth: 120 },
];
const col = (label: string) => {
  const c = COLUMNS.find((k) => k.label === label)!;
  return { flex: c.flex, minWidth: c.minWidth };
};

function resultText(r: RunRow) {
  if (r.molarMassGPerMol != null) return `${num(r.molarMassGPerMol, 5)} g/mol`;
  if (r.concentrationM != null) return `${num(r.concentrationM, 4)} mol/L`;
  return '—';
}
const countText = (r: RunRow) => `${r.readingCount} reading${r.readingCount === 1 ? '' : 's'}`;
const lastText = (r: RunRow) => (r.lastReceivedAt ? `last ${day(r.lastReceivedAt)}` : null);

export function LogbookScreen() {
  const lab = useActiveLab();
  const { width } = useWindowDimensions();
  const wide = width >= breakpoints.wide;
  const [q, setQ] = useState<RunListQuery>({ page: 1, pageSize: 25, sort: 'date', dir: 'desc' });
  const [selected, setSelected] = useState<string[]>([]);
  const list = useRunsList(lab?.labId, q);
  const set = (patch: Partial<RunListQuery>) => setQ((cur) => ({ ...cur, page: 1, ...patch }));
  const sortBy = (key: RunSort) => setQ((cur) => ({ ...cur, sort: key, dir: cur.sort === key && cur.dir === 'desc' ? 'asc' : 'desc' }));
  const data = list.data;
  const pages = data ? Math.max(1, Math.ceil(data.total / (q.pageSize ?? 25))) : 1;
  const toggle = (id: string) => setSelected((s) => (s.includes(id) ? s.filter((x) => x !== id) : [...s, id]));

  if (!lab) {
    return (
      <Screen title="Logbook" subtitle="Every run of the lab: results, reports, comparisons, review." testID="screen-logbook">
        <Card>
          <Text tone="muted">Sign in to see your lab’s runs (Lab section).</Text>
        </Card>
      </Screen>
    );
  }

  return (
    <Screen
      title="Logbook"
      subtitle={`${lab.labName}${lab.isDemo ? ' — demo data' : ''}: every run, with reports, comparisons and review.`}
      testID="screen-logbook"
      actions={
        <View style={styles.row}>
          {selected.length >= 2 && <Button label={`Compare ${selected.length}`} onPress={() => router.push(`/logbook/compare?ids=${selected.join(',')}`)} testID="compare-selected" />}
          {lab.role !== 'viewer' && <Button label="Import CSV" kind="secondary" onPress={() => router.push('/logbook/import')} testID="open-import" />}
        </View>
      }
    >
      <Card title="Find runs">
        <View style={[styles.filters, wide && styles.filtersWide]}>
          <View style={styles.filter}>
            <Field label="Search" placeholder="sample, notes, analyst" value={q.q ?? ''} onChangeText={(t) => set({ q: t || undefined })} testID="filter-search" />
          </View>
          <View style={styles.filter}>
            <Field label="Sample" value={q.sample ?? ''} onChangeText={(t) => set({ sample: t || undefined })} testID="filter-sample" />
          </View>
          <View style={styles.filter}>
            <Field label="From" placeholder="YYYY-MM-DD" value={q.from ?? ''} onChangeText={(t) => set({ from: /^\d{4}-\d{2}-\d{2}$/.test(t) ? t : undefined })} testID="filter-from" />
          </View>
          <View style={styles.filter}>
            <Field label="To" placeholder="YYYY-MM-DD" value={q.to ?? ''} onChangeText={(t) => set({ to: /^\d{4}-\d{2}-\d{2}$/.test(t) ? t : undefined })} testID="filter-to" />
          </View>
        </View>
        <Text variant="label">Status</Text>
        <View style={styles.chips}>
          {[undefined, ...RUN_STATUSES].map((s) => (
            <Chip key={s ?? 'all'} label={s ?? 'all'} on={q.status === s} onPress={() => set({ status: s })} testID={`filter-status-${s ?? 'all'}`} />
          ))}
        </View>
        {!!data?.facets.analysts.length && (
          <>
            <Text variant="label">Analyst</Text>
            <View style={styles.chips}>
              <Chip label="all" on={!q.analystId} onPress={() => set({ analystId: undefined })} testID="filter-analyst-all" />
              {data.facets.analysts.map((a) => (
                <Chip key={a.id} label={a.name} on={q.analystId === a.id} onPress={() => set({ analystId: a.id })} testID={`filter-analyst-${a.id}`} />
              ))}
            </View>
          </>
        )}
        {!!data?.facets.titrantLots.length && (
          <>
            <Text variant="label">Titrant lot</Text>
            <View style={styles.chips}>
              <Chip label="all" on={!q.titrantLot} onPress={() => set({ titrantLot: undefined })} testID="filter-lot-all" />
              {data.facets.titrantLots.map((l) => (
                <Chip key={l} label={l} on={q.titrantLot === l} onPress={() => set({ titrantLot: l })} testID={`filter-lot-${l}`} />
              ))}
            </View>
          </>
        )}
      </Card>

      {list.error ? (
        <Card tone="danger">
          <Text tone="danger">{(list.error as Error).message}</Text>
        </Card>
      ) : null}

      <Card title={data ? `${data.total} run${data.total === 1 ? '' : 's'}` : 'Runs'} aside={<Text tone="muted" variant="caption">Select two or more to compare</Text>}>
        {wide ? (
          <View testID="runs-table" accessibilityRole="list">
            <View style={[styles.tr, styles.th]}>
              <View style={{ width: 36 }} />
              {COLUMNS.map((c) => (
                <Pressable key={c.label} style={col(c.label)} onPress={c.key ? () => sortBy(c.key!) : undefined} accessibilityRole={c.key ? 'button' : undefined} testID={c.key ? `sort-${c.key}` : undefined}>
                  <Text variant="label">
                    {c.label}
                    {c.key && q.sort === c.key ? (q.dir === 'asc' ? ' ▲' : ' ▼') : ''}
                  </Text>
                </Pressable>
              ))}
            </View>
            {data?.rows.map((r) => (
              <View key={r.id} style={styles.tr} testID={`run-row-${r.id}`}>
                <Pressable style={{ width: 36 }} onPress={() => toggle(r.id)} accessibilityRole="checkbox" accessibilityState={{ checked: selected.includes(r.id) }} testID={`select-${r.id}`}>
                  <Text>{selected.includes(r.id) ? '☑' : '☐'}</Text>
                </Pressable>
                <Pressable style={col('Sample')} onPress={() => router.push(`/logbook/${r.id}`)} accessibilityRole="link">
                  <Text tone="accent">{r.sampleName}</Text>
                </Pressable>
                <Text style={col('Analyst')}>{r.analystName}</Text>
                <Text style={col('Date')} numeric numberOfLines={1}>{day(r.createdAt)}</Text>
                <Text style={col('Ve (mL)')} numeric>{num(r.equivalenceVolumeMl, 4)}</Text>
                <Text style={col('pKa')} numeric>{num(r.pKa, 3)}</Text>
                <Text style={col('Result')} numeric>{resultText(r)}</Text>
                <View style={col('Status')}>
                  <Badge label={r.status} tone={statusTone(r.status)} />
                </View>
                <View style={col('Sync')}>
                  <Text variant="caption" tone="muted" numberOfLines={1}>{countText(r)}</Text>
                  {lastText(r) && <Text variant="caption" tone="muted" numeric numberOfLines={1}>{lastText(r)}</Text>}
                </View>
              </View>
            ))}
          </View>
        ) : (
          <View testID="runs-cards" style={{ gap: space.sm }}>
            <View style={styles.chips}>
              {(['date', 'sample', 've', 'pka'] as RunSort[]).map((k) => (
                <Chip key={k} label={`sort: ${k}${q.sort === k ? (q.dir === 'asc' ? ' ▲' : ' ▼') : ''}`} on={q.sort === k} onPress={() => sortBy(k)} testID={`sort-${k}`} />
              ))}
            </View>
            {data?.rows.map((r) => (
              <Pressable key={r.id} onPress={() => router.push(`/logbook/${r.id}`)} onLongPress={() => toggle(r.id)} style={[styles.card, selected.includes(r.id) && styles.cardOn]} testID={`run-row-${r.id}`}>
                <View style={styles.rowBetween}>
                  <Text variant="label" style={{ flex: 1 }}>{r.sampleName}</Text>
                  <Badge label={r.status} tone={statusTone(r.status)} />
                </View>
                {/* Pieces that wrap between them, never inside a date. */}
                <View style={styles.meta}>
                  <Text tone="muted" variant="caption">{r.analystName}</Text>
                  <Text tone="muted" variant="caption" numeric numberOfLines={1}>· {day(r.createdAt)}</Text>
                  <Text tone="muted" variant="caption" numeric numberOfLines={1}>· {[countText(r), lastText(r)].filter(Boolean).join(', ')}</Text>
                </View>
                <Text numeric>
                  Ve {num(r.equivalenceVolumeMl, 4)} mL · pKa {num(r.pKa, 3)} · {resultText(r)}
                </Text>
                <Pressable onPress={() => toggle(r.id)} testID={`select-${r.id}`} accessibilityRole="checkbox" accessibilityState={{ checked: selected.includes(r.id) }} style={styles.selectBox}>
                  <Text variant="caption">{selected.includes(r.id) ? '☑ selected for compare' : '☐ compare'}</Text>
                </Pressable>
              </Pressable>
            ))}
          </View>
        )}
        {data && !data.rows.length && <Text tone="muted">No run matches these filters.</Text>}
        <View style={styles.rowBetween}>
          <Button label="Previous" kind="quiet" disabled={(q.page ?? 1) <= 1} onPress={() => setQ((c) => ({ ...c, page: (c.page ?? 1) - 1 }))} testID="page-prev" />
          <Text testID="page-info">
            Page {q.page} of {pages}
          </Text>
          <Button label="Next" kind="quiet" disabled={(q.page ?? 1) >= pages} onPress={() => setQ((c) => ({ ...c, page: (c.page ?? 1) + 1 }))} testID="page-next" />
        </View>
      </Card>
    </Screen>
  );
}

export function Chip({ label, on, onPress, testID }: { label: string; on: boolean; onPress: () => void; testID?: string }) {
  return (
    <Pressable onPress={onPress} style={[styles.chip, on && styles.chipOn]} accessibilityRole="button" accessibilityState={{ selected: on }} testID={testID}>
      <Text variant="caption" tone={on ? 'inverse' : 'ink'}>
        {label}
      </Text>
    </Pressable>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' },
  rowBetween: { flexDirection: 'row', justifyContent: 'space-between', alignItems: 'center', gap: space.sm },
  filters: { gap: space.sm },
  filtersWide: { flexDirection: 'row' },
  filter: { flex: 1, minWidth: 160 },
  chips: { flexDirection: 'row', flexWrap: 'wrap', gap: space.xs, marginVertical: space.xs },
  chip: { minHeight: 36, paddingHorizontal: space.md, justifyContent: 'center', borderRadius: 999, borderWidth: 1, borderColor: colors.line, backgroundColor: colors.surface },
  chipOn: { backgroundColor: colors.accent, borderColor: colors.accent },
  tr: { flexDirection: 'row', alignItems: 'center', minHeight: 48, borderBottomWidth: 1, borderBottomColor: colors.grid, gap: space.sm },
  th: { borderBottomColor: colors.lineStrong },
  card: { padding: space.md, borderWidth: 1, borderColor: colors.line, borderRadius: 10, backgroundColor: colors.surface, gap: space.xs },
  cardOn: { borderColor: colors.accent, borderWidth: 2 },
  selectBox: { minHeight: 40, justifyContent: 'center' },
  meta: { flexDirection: 'row', flexWrap: 'wrap', columnGap: space.xs },
});
