import { router, useLocalSearchParams } from 'expo-router';
import { useMemo, useState } from 'react';
import { calibrateElectrode, iupacBufferPH, IUPAC_BUFFERS } from '../../../shared/calibration/electrode';
import { IUPAC_BUFFER_IDS, type IupacBufferId } from '../../../shared/schemas/calibration';
import { Button, Card, Field, Screen, Text } from '../../ui';
import { parseDecimal } from './forms';
import { useActiveLab, useCalibrations, useCreateElectrodeCalibration } from './hooks';
import { ErrorNote, ManagerGate, ResultRow } from './parts';

/** Electrode calibration with 2 or 3 buffers: IUPAC values at the measured temperature, or the certificate's pH. */
export function ElectrodeScreen() {
  return (
    <ManagerGate title="Electrode calibration">
      <ElectrodeForm />
    </ManagerGate>
  );
}

type Point = { buffer: IupacBufferId | 'custom'; pH: string; mV: string };

function ElectrodeForm() {
  const { electrodeId } = useLocalSearchParams<{ electrodeId: string }>();
  const { labId } = useActiveLab();
  const overview = useCalibrations(labId);
  const save = useCreateElectrodeCalibration(labId);
  const electrode = overview.data?.electrodes.find((e) => e.id === electrodeId);
  const s = overview.data?.settings;
  const [temp, setTemp] = useState('25');
  const [points, setPoints] = useState<Point[]>(IUPAC_BUFFER_IDS.map((b) => ({ buffer: b, pH: '', mV: '' })));
  const t = parseDecimal(temp);
  const setPoint = (i: number, p: Partial<Point>) => setPoints((xs) => xs.map((x, j) => (j === i ? { ...x, ...p } : x)));

  const body = useMemo(() => {
    const used = points.filter((p) => p.mV.trim() !== '');
    return {
      temperatureC: t ?? Number.NaN,
      points: used.map((p) => (p.buffer === 'custom' ? { pH: parseDecimal(p.pH) ?? Number.NaN, mV: parseDecimal(p.mV) ?? Number.NaN } : { buffer: p.buffer, mV: parseDecimal(p.mV) ?? Number.NaN })),
    };
  }, [points, t]);
  const preview = useMemo(() => {
    if (body.points.length < 2) return null;
    try {
      return calibrateElectrode({ ...body, limits: s ? { minSlopePct: s.electrodeMinSlopePct, maxSlopePct: s.electrodeMaxSlopePct, maxAbsOffsetMv: s.electrodeMaxAbsOffsetMv } : undefined });
    } catch (e) {
      return { error: (e as Error).message };
    }
  }, [body, s]);

  return (
    <Screen title="Electrode calibration" subtitle={electrode?.identifier ?? 'Electrode'} testID="screen-electrode">
      <Card>
        <Field label="Buffer temperature" unit="°C" keyboardType="decimal-pad" value={temp} onChangeText={setTemp} testID="el-temp" />
        <Text variant="caption" tone="muted">
          IUPAC primary standards (Buck et al. 2002) at this temperature are offered; switch a row to “custom” to type
          your buffer certificate’s pH. Leave a row’s mV empty to use 2 buffers.
        </Text>
      </Card>
      {points.map((p, i) => {
        let offered = '';
        if (p.buffer !== 'custom' && t !== undefined && Number.isFinite(t)) {
          try {
            offered = `pH ${iupacBufferPH(p.buffer, t).toFixed(3)} at ${t} °C`;
          } catch (e) {
            offered = (e as Error).message;
          }
        }
        return (
          <Card key={i} title={p.buffer === 'custom' ? `Buffer ${i + 1}: custom` : `Buffer ${i + 1}: ${IUPAC_BUFFERS[p.buffer].label}`}>
            {p.buffer === 'custom' ? (
              <Field label="pH of the buffer" keyboardType="decimal-pad" value={p.pH} onChangeText={(x) => setPoint(i, { pH: x })} />
            ) : (
              <Text numeric>{offered}</Text>
            )}
            <Field label="Reading" unit="mV" keyboardType="numbers-and-punctuation" value={p.mV} onChangeText={(x) => setPoint(i, { mV: x })} testID={`el-mv-${i}`} />
            <Button
              label={p.buffer === 'custom' ? 'Use the IUPAC value' : 'Custom pH'}
              kind="quiet"
              onPress={() => setPoint(i, { buffer: p.buffer === 'custom' ? IUPAC_BUFFER_IDS[i] : 'custom' })}
            />
          </Card>
        );
      })}
      {preview ? (
        'error' in preview ? (
          <Card tone="warn">
            <Text>{preview.error}</Text>
          </Card>
        ) : (
          <Card title="Result" tone={preview.accepted ? 'ok' : 'danger'} testID="el-result">
            <ResultRow label="Slope (% of Nernst at this temperature)" value={`${preview.slopePct.toFixed(1)} %`} />
            <ResultRow label="Offset (mV at pH 7)" value={`${preview.offsetMv.toFixed(1)} mV`} />
            <Text>{preview.accepted ? 'Passes the lab limits.' : `Fails: ${preview.reasons.join('; ')}`}</Text>
            {preview.warnings.map((w) => (
              <Text key={w} variant="caption" tone="warn">
                {w}
              </Text>
            ))}
          </Card>
        )
      ) : null}
      <ErrorNote error={save.error} />
      <Button
        label="Save calibration"
        disabled={body.points.length < 2}
        busy={save.isPending}
        onPress={() => save.mutate({ electrodeId: electrodeId!, body }, { onSuccess: () => router.replace('/calibrate') })}
        testID="el-save"
      />
    </Screen>
  );
}
