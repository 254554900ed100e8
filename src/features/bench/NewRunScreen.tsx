// Setting up a run: sample, titrant, drip rate, electrode, temperature; the plan updates as the form fills.
// Titrant lot, drip-rate and electrode calibration are chosen from the lab's (CalibrationPicker, cached on the
// device for offline use); typing by hand stays possible and is flagged on the run.
import { router } from 'expo-router';
import { useMemo, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { useLayoutSize } from '../../theme/layout';
import { space } from '../../theme/tokens';
import { Button, Card, Field, Screen, Text } from '../../ui';
import { applyChoice, choiceWarnings, MANUAL, resolveChoice, type CalibrationChoice } from './calibrationChoice';
import { CalibrationPicker, useSetupCalibrations } from './CalibrationPicker';
import { LocalGate } from './LocalGate';
import { planRun } from './plan';
import { PlanCard } from './PlanCard';
import { SafetyNote } from './SafetyNote';
import { issuesByField, numberOrUndefined, runSetupSchema, setupWarnings, type RunSetup } from './setup';

type Form = Record<
  'label' | 'massG' | 'volumeMl' | 'acidProtons' | 'estMolarMass' | 'estConcentration' | 'estPKa' | 'titrantM' | 'standardisedOn' | 'rate' | 'startMl' | 'slope' | 'offset' | 'calTemp' | 'calibratedAt' | 'temperatureC',
  string
>;

const EMPTY: Form = {
  label: '',
  massG: '',
  volumeMl: '',
  acidProtons: '1',
  estMolarMass: '',
  estConcentration: '',
  estPKa: '',
  titrantM: '',
  standardisedOn: '',
  rate: '',
  startMl: '0.00',
  slope: '',
  offset: '',
  calTemp: '25',
  calibratedAt: '',
  temperatureC: '',
};

function toSetup(f: Form, electrode: boolean): unknown {
  const pka = f.estPKa.trim() ? f.estPKa.split(/[;\s]+|,(?=\s)/).filter(Boolean).map((x) => numberOrUndefined(x) ?? Number.NaN) : undefined;
  const calAt = f.calibratedAt.trim() ? Date.parse(f.calibratedAt.trim().replace(' ', 'T')) : Number.NaN;
  return {
    label: f.label,
    sample: {
      massG: numberOrUndefined(f.massG),
      volumeMl: numberOrUndefined(f.volumeMl),
      acidProtons: numberOrUndefined(f.acidProtons),
      estMolarMassGPerMol: numberOrUndefined(f.estMolarMass),
      estConcentrationM: numberOrUndefined(f.estConcentration),
      estPKa: pka,
    },
    titrant: { source: 'manual', concentrationM: numberOrUndefined(f.titrantM), standardisedOn: f.standardisedOn.trim() || undefined },
    delivery: { source: 'manual', rateMlPerS: numberOrUndefined(f.rate), startBuretteMl: numberOrUndefined(f.startMl) ?? 0 },
    electrode: electrode
      ? { source: 'manual', slopeMvPerPH: numberOrUndefined(f.slope), offsetMv: numberOrUndefined(f.offset), temperatureC: numberOrUndefined(f.calTemp), calibratedAtMs: calAt }
      : undefined,
    temperatureC: numberOrUndefined(f.temperatureC),
  };
}

export function NewRunScreen() {
  return (
    <LocalGate screenTitle="New run">
      {(local) => <NewRunForm create={(s) => local.store.createRun({ label: s.label, setup: s })} />}
    </LocalGate>
  );
}

function NewRunForm({ create }: { create(s: RunSetup): Promise<{ id: string }> }) {
  const wide = useLayoutSize() === 'wide';
  const [f, setF] = useState<Form>(EMPTY);
  // The lab's calibrations: the ones in force are chosen unless the analyst picks another or types by hand.
  const [nowMs] = useState(() => Date.now());
  const cal = useSetupCalibrations(nowMs);
  const [picked, setPicked] = useState<Partial<CalibrationChoice>>({});
  const choice = resolveChoice(picked, cal.options);
  const pick = (k: keyof CalibrationChoice) => (id: string) => setPicked((x) => ({ ...x, [k]: id }));
  const [touched, setTouched] = useState(false);
  const [busy, setBusy] = useState(false);
  const [saveError, setSaveError] = useState<string | null>(null);
  const parsed = useMemo(
    () => runSetupSchema.safeParse(applyChoice(toSetup(f, choice.electrode === MANUAL) as Parameters<typeof applyChoice>[0], choice, cal.options)),
    [f, choice.titrant, choice.drip, choice.electrode, cal.options], // eslint-disable-line react-hooks/exhaustive-deps
  );
  const errors = touched && !parsed.success ? issuesByField(parsed.error) : {};
  const plan = useMemo(() => (parsed.success ? planRun(parsed.data) : null), [parsed]);
  const warnings = parsed.success ? [...choiceWarnings(choice, cal.options), ...setupWarnings(parsed.data, Date.now(), cal.electrodeMaxAgeH)] : [];
  const set = (k: keyof Form) => (t: string) => setF((x) => ({ ...x, [k]: t }));
  const fld = (k: keyof Form, label: string, unit: string | undefined, path: string, hint?: string, extra?: object) => (
    <Field label={label} unit={unit} value={f[k]} onChangeText={set(k)} error={errors[path]} hint={hint} keyboardType="decimal-pad" testID={`setup-${k}`} {...extra} />
  );

  const submit = async () => {
    setTouched(true);
    if (!parsed.success) return;
    setBusy(true);
    try {
      const run = await create(parsed.data);
      router.replace(`/bench/run/${run.id}`);
    } catch (e) {
      setSaveError(e instanceof Error ? e.message : String(e));
      setBusy(false);
    }
  };

  const form = (
    <View style={styles.col}>
      <Card title="Sample">
        <Field label="Sample name" value={f.label} onChangeText={set('label')} error={errors.label} testID="setup-label" placeholder="e.g. unknown acid B, portion 2" />
        <View style={styles.pair}>
          <View style={styles.half}>{fld('massG', 'Mass weighed', 'g', 'sample.massG', 'Leave empty for a solution.')}</View>
          <View style={styles.half}>{fld('volumeMl', 'Volume in the beaker', 'mL', 'sample.volumeMl')}</View>
        </View>
        <View style={styles.pair}>
          <View style={styles.half}>{fld('acidProtons', 'Acidic protons', undefined, 'sample.acidProtons', 'If known (1 for a monoprotic acid).', { keyboardType: 'number-pad' })}</View>
          <View style={styles.half}>{fld('estMolarMass', 'Estimated molar mass', 'g/mol', 'sample.estMolarMassGPerMol', 'For the plan only.')}</View>
        </View>
        <View style={styles.pair}>
          <View style={styles.half}>{fld('estConcentration', 'or estimated concentration', 'mol/L', 'sample.estConcentrationM', 'For a solution.')}</View>
          <View style={styles.half}>{fld('estPKa', 'Estimated pKa', undefined, 'sample.estPKa', 'If known; several separated by spaces.', { keyboardType: 'default' })}</View>
        </View>
      </Card>
      {cal.source ? (
        <Text variant="caption" tone={cal.source.tone} testID="setup-calibrations-source">
          {cal.source.text}
        </Text>
      ) : null}
      <Card title="Titrant (NaOH)">
        <CalibrationPicker label="Titrant lot" testID="setup-lot" options={cal.options?.titrant ?? []} value={choice.titrant} onChange={pick('titrant')} manualLabel="Type the concentration">
          <View style={styles.pair}>
            <View style={styles.half}>{fld('titrantM', 'Concentration', 'mol/L', 'titrant.concentrationM')}</View>
            <View style={styles.half}>{fld('standardisedOn', 'Standardised on', undefined, 'titrant.standardisedOn', 'YYYY-MM-DD', { keyboardType: 'default', placeholder: '2026-01-31' })}</View>
          </View>
        </CalibrationPicker>
      </Card>
      <Card title="Burette and drip rate">
        <CalibrationPicker label="Drip-rate calibration" testID="setup-drip" options={cal.options?.drip ?? []} value={choice.drip} onChange={pick('drip')} manualLabel="Type a drip rate">
          {fld('rate', 'Drip rate', 'mL/s', 'delivery.rateMlPerS')}
        </CalibrationPicker>
        {fld('startMl', 'Burette start reading', 'mL', 'delivery.startBuretteMl')}
      </Card>
      <Card title="Electrode and temperature">
        <CalibrationPicker
          label="Electrode calibration"
          testID="setup-electrode"
          options={cal.options?.electrode ?? []}
          value={choice.electrode}
          onChange={pick('electrode')}
          noneLabel="None (pH typed from the meter)"
          manualLabel="Type slope and offset"
        >
          <>
            <View style={styles.pair}>
              <View style={styles.half}>{fld('slope', 'Slope', 'mV/pH', 'electrode.slopeMvPerPH', 'Negative, about −59 at 25 °C.', { keyboardType: 'numbers-and-punctuation' })}</View>
              <View style={styles.half}>{fld('offset', 'Potential at pH 7', 'mV', 'electrode.offsetMv', undefined, { keyboardType: 'numbers-and-punctuation' })}</View>
            </View>
            <View style={styles.pair}>
              <View style={styles.half}>{fld('calTemp', 'Calibrated at', '°C', 'electrode.temperatureC')}</View>
              <View style={styles.half}>{fld('calibratedAt', 'Calibrated on', undefined, 'electrode.calibratedAtMs', 'YYYY-MM-DD HH:MM', { keyboardType: 'default' })}</View>
            </View>
          </>
        </CalibrationPicker>
        {fld('temperatureC', 'Temperature of the sample', '°C', 'temperatureC')}
      </Card>
    </View>
  );

  const side = (
    <View style={styles.col}>
      <PlanCard plan={plan} />
      {warnings.length ? (
        <Card tone="warn" title="Check before you start" testID="setup-warnings">
          {warnings.map((w) => (
            <Text key={w} variant="caption">
              • {w}
            </Text>
          ))}
        </Card>
      ) : null}
      <SafetyNote compact />
      {saveError ? <Text tone="danger" accessibilityRole="alert">Not saved: {saveError}</Text> : null}
      {touched && !parsed.success ? (
        <Text tone="danger" accessibilityRole="alert" testID="setup-invalid">
          Some fields need attention (marked above).
        </Text>
      ) : null}
      <Button size="large" wide label="Create the run" busy={busy} onPress={() => void submit()} testID="create-run" />
    </View>
  );

  return (
    <Screen title="New run" subtitle="Everything here is saved with the run; the analysis uses the measured values only." testID="screen-new-run">
      {wide ? (
        <View style={styles.columns}>
          <View style={styles.main}>{form}</View>
          <View style={styles.aside}>{side}</View>
        </View>
      ) : (
        <>
          {form}
          {side}
        </>
      )}
    </Screen>
  );
}

const styles = StyleSheet.create({
  col: { gap: space.md },
  pair: { flexDirection: 'row', gap: space.md, flexWrap: 'wrap' },
  half: { flex: 1, minWidth: 150 },
  columns: { flexDirection: 'row', gap: space.xl, alignItems: 'flex-start' },
  main: { flex: 3, minWidth: 0 },
  aside: { flex: 2, minWidth: 320 },
});
