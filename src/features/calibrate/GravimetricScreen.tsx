import { router, useLocalSearchParams } from 'expo-router';
import { useMemo, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { checkRepeatability, gravimetricDripRate } from '../../../shared/calibration/gravimetric';
import type { GravimetricReplicateInput } from '../../../shared/schemas/calibration';
import { space } from '../../theme/tokens';
import { Button, Card, Field, Screen, Text } from '../../ui';
import { SafetyNote } from '../bench/SafetyNote';
import { monoNow } from '../bench/clockSource';
import { formatClock } from '../bench/clock';
import { parseDecimal, positiveError, pressTimer, TIMER_IDLE, timerSeconds, withUncertainty, type Timer } from './forms';
import { useActiveLab, useCalibrations, useCreateDripCalibration } from './hooks';
import { ErrorNote, ManagerGate, ResultRow } from './parts';
import { useTicker } from './useTicker';

/** Gravimetric calibration at the bench: time each delivery into a tared vessel, weigh it, repeat. */
export function GravimetricScreen() {
  return (
    <ManagerGate title="Gravimetric calibration">
      <GravimetricForm />
    </ManagerGate>
  );
}

function GravimetricForm() {
  const { settingId } = useLocalSearchParams<{ settingId: string }>();
  const { labId } = useActiveLab();
  const overview = useCalibrations(labId);
  const save = useCreateDripCalibration(labId);
  const [timer, setTimer] = useState<Timer>(TIMER_IDLE);
  const running = timer.startedAt !== null && timer.stoppedAt === null;
  const now = useTicker(running);
  const [mass, setMass] = useState('');
  const [temp, setTemp] = useState('');
  const [pressure, setPressure] = useState('');
  const [humidity, setHumidity] = useState('');
  const [deliveries, setDeliveries] = useState<GravimetricReplicateInput[]>([]);
  const [error, setError] = useState<string | null>(null);

  const setting = overview.data?.burettes.flatMap((b) => b.settings.map((s) => ({ b, s }))).find((x) => x.s.id === settingId);
  const limits = overview.data?.settings;
  const seconds = timerSeconds(timer, now);

  const preview = useMemo(() => {
    if (!deliveries.length) return null;
    try {
      const r = gravimetricDripRate(deliveries);
      const acc = limits ? checkRepeatability(r, { maxRelSdPct: limits.gravimetricMaxRelSdPct, minReplicates: limits.gravimetricMinReplicates }) : null;
      return { r, acc };
    } catch (e) {
      return { error: (e as Error).message };
    }
  }, [deliveries, limits]);

  const addDelivery = () => {
    setError(null);
    if (timer.stoppedAt === null) return setError('Time the delivery first: Start when the first drop falls, Stop when you close the stopcock.');
    const err = positiveError(mass, 'the mass delivered') ?? positiveError(temp, 'the water temperature');
    if (err) return setError(err);
    const p = parseDecimal(pressure);
    const h = parseDecimal(humidity);
    if ((p !== undefined && !Number.isFinite(p)) || (h !== undefined && !Number.isFinite(h))) return setError('Pressure and humidity must be numbers, or left empty.');
    const d: GravimetricReplicateInput = { massG: parseDecimal(mass)!, durationS: Math.round(seconds * 100) / 100, waterTempC: parseDecimal(temp)! };
    if (p !== undefined) d.airPressureHPa = p;
    if (h !== undefined) d.relativeHumidityPct = h;
    try {
      gravimetricDripRate(d);
    } catch (e) {
      return setError((e as Error).message);
    }
    setDeliveries((xs) => [...xs, d]);
    setMass('');
    setTimer(TIMER_IDLE);
  };

  const submit = () =>
    save.mutate(
      { settingId: settingId!, body: { method: 'gravimetric', inputs: { deliveries } } },
      { onSuccess: () => router.replace('/calibrate') },
    );

  return (
    <Screen
      title="Gravimetric calibration"
      subtitle={setting ? `${setting.b.identifier} · ${setting.s.stopcockSetting}` : 'Drip setting'}
      testID="screen-gravimetric"
    >
      <Card title={`Delivery ${deliveries.length + 1}`}>
        <Text variant="caption" tone="muted">
          Tare the vessel. Press Start as the stopcock opens on its setting, Stop when you close it; then weigh.
        </Text>
        <Text variant="clock" numeric align="center" testID="grav-clock">
          {formatClock(seconds)}
        </Text>
        <Button
          label={running ? 'Stop' : timer.stoppedAt !== null ? 'Restart' : 'Start'}
          size="large"
          kind={running ? 'danger' : 'primary'}
          onPress={() => setTimer((t) => pressTimer(t, monoNow()))}
          testID="grav-timer"
        />
        <Field label="Mass delivered" unit="g" keyboardType="decimal-pad" value={mass} onChangeText={setMass} testID="grav-mass" />
        <Field label="Water temperature" unit="°C" keyboardType="decimal-pad" value={temp} onChangeText={setTemp} testID="grav-temp" />
        <View style={styles.two}>
          <View style={styles.half}>
            <Field label="Air pressure" unit="hPa" keyboardType="decimal-pad" value={pressure} onChangeText={setPressure} hint="Optional; 1013.25 if empty" />
          </View>
          <View style={styles.half}>
            <Field label="Humidity" unit="%" keyboardType="decimal-pad" value={humidity} onChangeText={setHumidity} hint="Optional; 50 % if empty" />
          </View>
        </View>
        {error ? (
          <Text tone="danger" accessibilityRole="alert" testID="grav-error">
            {error}
          </Text>
        ) : null}
        <Button label="Add this delivery" kind="secondary" onPress={addDelivery} testID="grav-add" />
      </Card>

      {deliveries.length ? (
        <Card title={`${deliveries.length} ${deliveries.length === 1 ? 'delivery' : 'deliveries'}`} testID="grav-summary">
          {deliveries.map((d, i) => (
            <ResultRow key={i} label={`${i + 1}. ${d.massG} g in ${d.durationS.toFixed(2)} s at ${d.waterTempC} °C`} value="" />
          ))}
          {preview && 'r' in preview && preview.r ? (
            <>
              <ResultRow label="Mean rate (20 °C)" value={withUncertainty(preview.r.rateMlPerS, preview.r.uRateMlPerS, 'mL/s')} testID="grav-rate" />
              <ResultRow label="Standard deviation" value={preview.r.sdRateMlPerS !== undefined ? `${preview.r.sdRateMlPerS.toPrecision(2)} mL/s (${preview.r.relSdPct!.toFixed(2)} %)` : 'needs 2 deliveries'} />
              {preview.acc ? (
                <Text tone={preview.acc.accepted ? 'ok' : 'warn'} testID="grav-acceptance">
                  {preview.acc.accepted ? 'Repeatability within the lab limit.' : preview.acc.reasons.join('; ')}
                </Text>
              ) : null}
              <Text variant="caption" tone="muted">
                Preview on this phone; the server recomputes the result when you save.
              </Text>
            </>
          ) : null}
          <ErrorNote error={save.error} />
          <Button label="Save calibration" onPress={submit} busy={save.isPending} testID="grav-save" />
        </Card>
      ) : null}
      <SafetyNote compact />
    </Screen>
  );
}

const styles = StyleSheet.create({
  two: { flexDirection: 'row', gap: space.md, flexWrap: 'wrap' },
  half: { flexGrow: 1, flexBasis: 140 },
});
