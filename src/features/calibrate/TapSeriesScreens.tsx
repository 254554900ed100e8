// Mark timing (tap as the meniscus passes each chosen graduation) and the drop counter (tap per drop).
import { router, useLocalSearchParams } from 'expo-router';
import { useMemo, useState } from 'react';
import { countDrops } from '../../../shared/calibration/dropCounter';
import { fitBuretteDrain } from '../../../shared/calibration/markTiming';
import { Button, Card, Field, Screen, Text } from '../../ui';
import { monoNow } from '../bench/clockSource';
import { graduations, parseDecimal, withUncertainty } from './forms';
import { useActiveLab, useCalibrations, useCreateDripCalibration } from './hooks';
import { ErrorNote, ManagerGate, ResultRow } from './parts';

function useSetting() {
  const { settingId } = useLocalSearchParams<{ settingId: string }>();
  const { labId } = useActiveLab();
  const o = useCalibrations(labId);
  const found = o.data?.burettes.flatMap((b) => b.settings.map((s) => ({ b, s }))).find((x) => x.s.id === settingId);
  return { settingId: settingId!, labId, found };
}

export function MarkTimingScreen() {
  return (
    <ManagerGate title="Mark timing">
      <MarkTimingForm />
    </ManagerGate>
  );
}

function MarkTimingForm() {
  const { settingId, labId, found } = useSetting();
  const save = useCreateDripCalibration(labId);
  const [from, setFrom] = useState('0');
  const [to, setTo] = useState(String(found?.b.capacityMl ?? 50));
  const [step, setStep] = useState('5');
  const marks = graduations(parseDecimal(from) ?? 0, parseDecimal(to) ?? 0, parseDecimal(step) ?? 0);
  const [taps, setTaps] = useState<number[]>([]);
  const points = taps.map((t, i) => ({ timeS: (t - taps[0]) / 1000, buretteMl: marks[i] }));
  const fit = useMemo(() => {
    if (points.length < 4) return null;
    try {
      return fitBuretteDrain({ points });
    } catch (e) {
      return { error: (e as Error).message };
    }
  }, [points]);
  const next = marks[taps.length];
  return (
    <Screen title="Mark timing" subtitle={found ? `${found.b.identifier} · ${found.s.stopcockSetting}` : undefined} testID="screen-mark-timing">
      <Card title="Graduations to tap">
        <Field label="From" unit="mL" keyboardType="decimal-pad" value={from} onChangeText={setFrom} editable={taps.length === 0} />
        <Field label="To" unit="mL" keyboardType="decimal-pad" value={to} onChangeText={setTo} editable={taps.length === 0} />
        <Field label="Every" unit="mL" keyboardType="decimal-pad" value={step} onChangeText={setStep} editable={taps.length === 0} />
        <Text variant="caption" tone="muted">
          Fill to just above the first mark, open the stopcock on its setting, and tap as the meniscus passes each mark.
        </Text>
      </Card>
      <Button
        label={next === undefined ? 'All marks tapped' : `Tap at ${next} mL`}
        size="large"
        disabled={next === undefined || marks.length < 4}
        onPress={() => setTaps((xs) => [...xs, monoNow()])}
        testID="mark-tap"
      />
      {taps.length ? <Button label="Start over" kind="quiet" onPress={() => setTaps([])} /> : null}
      {fit ? (
        'error' in fit ? (
          <Card tone="warn">
            <Text>{fit.error}</Text>
          </Card>
        ) : (
          <Card title="Drain fit">
            <ResultRow label="Rate at the top" value={withUncertainty(fit.rateTopMlPerS, fit.uQ0, 'mL/s')} />
            <ResultRow label="Rate at the last mark" value={`${fit.rateBottomMlPerS.toPrecision(4)} mL/s`} />
            <ResultRow label="Rate drop top → bottom" value={`${fit.dropPct.toFixed(1)} %`} />
            <ResultRow label="RMS residual" value={`${fit.rmseMl.toFixed(3)} mL`} />
            {fit.notes.map((n) => (
              <Text key={n} variant="caption" tone="muted">
                {n}
              </Text>
            ))}
          </Card>
        )
      ) : null}
      <ErrorNote error={save.error} />
      <Button
        label="Save calibration"
        disabled={points.length < 4}
        busy={save.isPending}
        onPress={() => save.mutate({ settingId, body: { method: 'mark-timing', inputs: { points } } }, { onSuccess: () => router.replace('/calibrate') })}
      />
    </Screen>
  );
}

export function DropCountScreen() {
  return (
    <ManagerGate title="Drop counter">
      <DropCountForm />
    </ManagerGate>
  );
}

function DropCountForm() {
  const { settingId, labId, found } = useSetting();
  const save = useCreateDripCalibration(labId);
  const [taps, setTaps] = useState<number[]>([]);
  const tapTimesS = taps.map((t) => (t - taps[0]) / 1000);
  const rate = found?.s.calibrations.find((c) => c.id === found.s.inForceId)?.rateMlPerS ?? undefined;
  const result = useMemo(() => (tapTimesS.length >= 2 ? countDrops({ tapTimesS, rateMlPerS: rate }) : null), [tapTimesS, rate]);
  return (
    <Screen title="Drop counter" subtitle={found ? `${found.b.identifier} · ${found.s.stopcockSetting}` : undefined} testID="screen-drop-count">
      <Text tone="muted">Tap once per drop for a minute or so.</Text>
      <Button label={`Drop (${Math.max(0, taps.length - 1)} counted)`} size="large" onPress={() => setTaps((xs) => [...xs, monoNow()])} testID="drop-tap" />
      {taps.length ? <Button label="Start over" kind="quiet" onPress={() => setTaps([])} /> : null}
      {result ? (
        <Card title="Drops">
          <ResultRow label="Drops per minute" value={result.dropsPerMin.toFixed(1)} />
          <ResultRow label="Drop volume" value={result.dropVolumeMl ? `${result.dropVolumeMl.toFixed(4)} mL` : 'needs a gravimetric rate of this setting'} />
          <Text variant="caption" tone="muted">
            A burette drop is about 0.05 mL (20 drops per mL) by common practice; the server uses this setting’s rate in force.
          </Text>
        </Card>
      ) : null}
      <ErrorNote error={save.error} />
      <Button
        label="Save drop count"
        disabled={tapTimesS.length < 2}
        busy={save.isPending}
        onPress={() => save.mutate({ settingId, body: { method: 'drop-count', inputs: { tapTimesS } } }, { onSuccess: () => router.replace('/calibrate') })}
      />
    </Screen>
  );
}
