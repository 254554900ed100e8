import { router } from 'expo-router';
import { useState } from 'react';
import { Platform, StyleSheet, View } from 'react-native';
import type { ImportMapping, ImportPreview } from '../../../shared/schemas/desk';
import { colors, space } from '../../theme/tokens';
import { Button, Card, Field, Screen, Text } from '../../ui';
import { useActiveLab, useImport, useImportPreview } from './api';
import { Chip } from './LogbookScreen';

/** CSV import: choose a file, map its columns (with a preview and every row error), then import as a run. */
export function ImportScreen() {
  const lab = useActiveLab();
  const preview = useImportPreview(lab?.labId);
  const doImport = useImport(lab?.labId);
  const [csv, setCsv] = useState('');
  const [p, setP] = useState<ImportPreview | null>(null);
  const [mapping, setMapping] = useState<Partial<ImportMapping>>({});
  const [f, setF] = useState({ sampleName: '', sampleVolumeMl: '50', sampleMassG: '', titrantConcentrationM: '0.1', rateMlPerS: '0.05', titrantLot: '' });
  const [result, setResult] = useState<string | null>(null);
  const numOrU = (s: string) => (s.trim() === '' ? undefined : Number(s.replace(',', '.')));

  const load = async (text: string) => {
    setCsv(text);
    setResult(null);
    const res = await preview.mutateAsync({ csv: text });
    setP(res);
    setMapping({ time: res.suggested.time, pH: res.suggested.pH, mV: res.suggested.mV, volume: res.suggested.time ? undefined : res.suggested.volume });
  };
  const check = async (m: Partial<ImportMapping>) => {
    setMapping(m);
    if (csv) setP(await preview.mutateAsync({ csv, mapping: m, rateMlPerS: numOrU(f.rateMlPerS) }));
  };
  const pick = () => {
    if (Platform.OS !== 'web' || typeof document === 'undefined') return;
    const input = document.createElement('input');
    input.type = 'file';
    input.accept = '.csv,text/csv,text/plain';
    input.onchange = async () => {
      const file = input.files?.[0];
      if (file) await load(await file.text());
    };
    input.click();
  };
  const submit = () =>
    doImport.mutate(
      {
        csv,
        mapping: mapping as ImportMapping,
        setup: {
          sampleName: f.sampleName,
          sampleVolumeMl: numOrU(f.sampleVolumeMl) ?? NaN,
          sampleMassG: numOrU(f.sampleMassG),
          titrantConcentrationM: numOrU(f.titrantConcentrationM) ?? NaN,
          rateMlPerS: numOrU(f.rateMlPerS) ?? NaN,
          titrantLot: f.titrantLot || undefined,
        },
      },
      { onSuccess: (r) => setResult(r.runId) },
    );
  const error = doImport.error as Error | null;
  const col = (key: keyof ImportMapping) => (
    <View style={styles.map}>
      <Text variant="label">{key === 'pH' ? 'pH column' : key === 'mV' ? 'mV column (optional)' : `${key} column`}</Text>
      <View style={styles.row}>
        <Chip label="none" on={!mapping[key]} onPress={() => void check({ ...mapping, [key]: undefined })} testID={`map-${key}-none`} />
        {p?.columns.map((c) => (
          <Chip key={c} label={c} on={mapping[key] === c} onPress={() => void check({ ...mapping, [key]: c, ...(key === 'time' ? { volume: undefined } : key === 'volume' ? { time: undefined } : {}) })} testID={`map-${key}-${c}`} />
        ))}
      </View>
    </View>
  );

  return (
    <Screen title="Import a CSV file" subtitle="Readings logged by a meter or typed elsewhere become a run like any other." testID="screen-import">
      <Card title="1. The file">
        <View style={styles.row}>
          <Button label="Choose a CSV file" onPress={pick} testID="import-pick" />
        </View>
        <Field label="…or paste the text" value={csv} onChangeText={(t) => void load(t)} multiline testID="import-text" />
        {preview.error && <Text tone="danger">{(preview.error as Error).message}</Text>}
      </Card>
      {p && (
        <Card title={`2. Columns (${p.rowCount} rows)`} testID="import-mapping">
          {col('time')}
          {col('volume')}
          {col('pH')}
          {col('mV')}
          <Text variant="label">Preview</Text>
          {p.sample.slice(0, 5).map((r, i) => (
            <Text key={i} variant="caption" numeric>{p.columns.map((c) => r[c]).join(' · ')}</Text>
          ))}
          {p.errors.length > 0 && (
            <View testID="import-preview-errors">
              {p.errors.map((e, i) => (
                <Text key={i} tone="danger" variant="caption">Line {e.line}{e.column ? ` (${e.column})` : ''}: {e.message}</Text>
              ))}
            </View>
          )}
        </Card>
      )}
      {p && (
        <Card title="3. The run">
          <Field label="Sample name" value={f.sampleName} onChangeText={(t) => setF({ ...f, sampleName: t })} testID="import-sample" />
          <Field label="Sample volume" unit="mL" value={f.sampleVolumeMl} onChangeText={(t) => setF({ ...f, sampleVolumeMl: t })} />
          <Field label="Sample mass (optional)" unit="g" value={f.sampleMassG} onChangeText={(t) => setF({ ...f, sampleMassG: t })} />
          <Field label="Titrant concentration" unit="mol/L" value={f.titrantConcentrationM} onChangeText={(t) => setF({ ...f, titrantConcentrationM: t })} />
          <Field label="Titrant lot (optional)" value={f.titrantLot} onChangeText={(t) => setF({ ...f, titrantLot: t })} />
          <Field label="Drip rate" unit="mL/s" value={f.rateMlPerS} onChangeText={(t) => setF({ ...f, rateMlPerS: t })} />
          <Button label="Import" busy={doImport.isPending} onPress={submit} testID="import-submit" />
          {error && (
            <View testID="import-error">
              <Text tone="danger">{error.message}</Text>
              <Text tone="muted" variant="caption">The rows at fault are listed under the preview above.</Text>
            </View>
          )}
          {result && (
            <View testID="import-done">
              <Text tone="ok">Imported.</Text>
              <Button label="Open the run" kind="secondary" onPress={() => router.push(`/logbook/${result}`)} />
            </View>
          )}
        </Card>
      )}
    </Screen>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', flexWrap: 'wrap', gap: space.xs },
  map: { gap: space.xs, paddingVertical: space.xs, borderBottomWidth: 1, borderBottomColor: colors.grid },
});
