import { router, useLocalSearchParams } from 'expo-router';
import { useState } from 'react';
import { buretteTolerance } from '../../../shared/calibration/buretteTolerance';
import { Button, Card, Field, Screen, Text } from '../../ui';
import { SafetyNote } from '../bench/SafetyNote';
import { parseDecimal } from './forms';
import { useActiveLab, useCreateBurette, useCreateDripSetting, useCreateElectrode, useCreateLot } from './hooks';
import { CarbonDioxideNote, ErrorNote, ManagerGate } from './parts';

/** Adds a burette, a drip setting, a titrant lot or an electrode to the lab's register. */
export function RegisterScreen() {
  const { kind } = useLocalSearchParams<{ kind: string }>();
  const title = { burette: 'New burette', setting: 'New drip setting', lot: 'New titrant lot', electrode: 'New electrode' }[kind ?? ''] ?? 'Register';
  return (
    <ManagerGate title={title}>
      <Screen title={title} testID="screen-register">
        {kind === 'burette' ? <BuretteForm /> : kind === 'setting' ? <SettingForm /> : kind === 'lot' ? <LotForm /> : kind === 'electrode' ? <ElectrodeForm /> : <Text>Nothing to register here.</Text>}
      </Screen>
    </ManagerGate>
  );
}

const done = { onSuccess: () => router.replace('/calibrate') };

function BuretteForm() {
  const { labId } = useActiveLab();
  const m = useCreateBurette(labId);
  const [identifier, setIdentifier] = useState('');
  const [capacity, setCapacity] = useState('50');
  const [cls, setCls] = useState<'A' | 'B'>('A');
  const [tol, setTol] = useState('');
  const cap = parseDecimal(capacity);
  const row = cap ? buretteTolerance(cap, cls) : undefined;
  return (
    <Card>
      <Field label="Identifier" value={identifier} onChangeText={setIdentifier} />
      <Field label="Capacity" unit="mL" keyboardType="decimal-pad" value={capacity} onChangeText={setCapacity} />
      <Button label={`Class ${cls} (tap to change)`} kind="secondary" onPress={() => setCls(cls === 'A' ? 'B' : 'A')} />
      <Text variant="caption" tone="muted">
        {row ? `Tolerance ±${row.toleranceMl} mL (${row.source === 'memory' ? 'ISO 385 / ASTM E287, recalled' : row.source}).` : 'No tolerance in the table for this burette: enter it from its certificate.'}
      </Text>
      {!row ? <Field label="Tolerance" unit="mL" keyboardType="decimal-pad" value={tol} onChangeText={setTol} /> : null}
      <ErrorNote error={m.error} />
      <Button label="Add burette" busy={m.isPending} onPress={() => m.mutate({ identifier, capacityMl: cap ?? Number.NaN, class: cls, toleranceMl: row ? undefined : parseDecimal(tol) }, done)} />
    </Card>
  );
}

function SettingForm() {
  const { buretteId } = useLocalSearchParams<{ buretteId: string }>();
  const { labId } = useActiveLab();
  const m = useCreateDripSetting(labId);
  const [stopcock, setStopcock] = useState('');
  const [tip, setTip] = useState('');
  return (
    <Card>
      <Field label="Stopcock setting" value={stopcock} onChangeText={setStopcock} hint="How you set it, e.g. ¼ turn, or a mark on the barrel" />
      <Field label="Tip" value={tip} onChangeText={setTip} hint="Optional" />
      <ErrorNote error={m.error} />
      <Button label="Add drip setting" busy={m.isPending} onPress={() => m.mutate({ buretteId: buretteId!, body: { stopcockSetting: stopcock, tip } }, done)} />
    </Card>
  );
}

function LotForm() {
  const { labId } = useActiveLab();
  const m = useCreateLot(labId);
  const [identifier, setIdentifier] = useState('');
  const [nominal, setNominal] = useState('0.1');
  const [prepared, setPrepared] = useState(new Date().toISOString().slice(0, 10));
  const [storage, setStorage] = useState('polyethylene bottle, protected from air');
  const preparedAt = /^\d{4}-\d{2}-\d{2}$/.test(prepared) ? `${prepared}T00:00:00Z` : prepared;
  return (
    <>
      <Card>
        <Field label="Lot identifier" value={identifier} onChangeText={setIdentifier} testID="lot-identifier" />
        <Field label="Nominal concentration" unit="mol/L" keyboardType="decimal-pad" value={nominal} onChangeText={setNominal} />
        <Field label="Prepared on" value={prepared} onChangeText={setPrepared} hint="YYYY-MM-DD" />
        <Field label="Storage" value={storage} onChangeText={setStorage} />
        <ErrorNote error={m.error} />
        <Button
          label="Add lot"
          busy={m.isPending}
          testID="lot-save"
          onPress={() => m.mutate({ identifier, titrant: 'NaOH', nominalConcentrationM: parseDecimal(nominal) ?? Number.NaN, preparedAt, storage }, done)}
        />
      </Card>
      <CarbonDioxideNote />
      <SafetyNote compact />
    </>
  );
}

function ElectrodeForm() {
  const { labId } = useActiveLab();
  const m = useCreateElectrode(labId);
  const [identifier, setIdentifier] = useState('');
  const [description, setDescription] = useState('');
  return (
    <Card>
      <Field label="Identifier" value={identifier} onChangeText={setIdentifier} />
      <Field label="Description" value={description} onChangeText={setDescription} hint="Optional" />
      <ErrorNote error={m.error} />
      <Button label="Add electrode" busy={m.isPending} onPress={() => m.mutate({ identifier, description }, done)} />
    </Card>
  );
}
