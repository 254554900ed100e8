import { router, useLocalSearchParams } from 'expo-router';
import { useMemo, useState } from 'react';
import { standardiseWithDefaults, STANDARDISATION_DEFAULTS } from '../../../shared/calibration/standardisation';
import { createStandardisationBodySchema, type CreateStandardisationBody } from '../../../shared/schemas/calibration-api';
import { Button, Card, Field, Screen, Text } from '../../ui';
import { SafetyNote } from '../bench/SafetyNote';
import { parseDecimal, withUncertainty } from './forms';
import { useActiveLab, useCalibrations, useCreateStandardisation } from './hooks';
import { CarbonDioxideNote, ErrorNote, ManagerGate, ResultRow } from './parts';

/** One standardisation of a titrant lot against KHP (QUAM A2 form); replicates are combined by the server. */
export function StandardisationScreen() {
  return (
    <ManagerGate title="Standardisation">
      <StandardisationForm />
    </ManagerGate>
  );
}

type Key = 'massG' | 'uMassG' | 'purity' | 'uPurity' | 'equivalenceVolumeMl' | 'uEquivalenceVolumeMl' | 'uRepeatabilityRel';

function StandardisationForm() {
  const { lotId } = useLocalSearchParams<{ lotId: string }>();
  const { labId } = useActiveLab();
  const overview = useCalibrations(labId);
  const save = useCreateStandardisation(labId);
  const lot = overview.data?.lots.find((l) => l.id === lotId);
  const [v, setV] = useState<Record<Key, string>>({
    massG: '',
    uMassG: '',
    purity: '',
    uPurity: '',
    equivalenceVolumeMl: '',
    uEquivalenceVolumeMl: '',
    uRepeatabilityRel: '',
  });
  const set = (k: Key) => (t: string) => setV((x) => ({ ...x, [k]: t }));

  const built = useMemo(() => {
    const body: Record<string, unknown> = { standard: 'KHP' };
    for (const [k, t] of Object.entries(v)) {
      const n = parseDecimal(t);
      if (n !== undefined) body[k] = n;
    }
    const parsed = createStandardisationBodySchema.safeParse(body);
    if (!parsed.success) return { issues: parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`) };
    try {
      return { body: parsed.data as CreateStandardisationBody, preview: standardiseWithDefaults(parsed.data) };
    } catch (e) {
      return { issues: [(e as Error).message] };
    }
  }, [v]);
  const started = v.massG !== '' || v.equivalenceVolumeMl !== '';

  return (
    <Screen title="Standardisation" subtitle={lot ? `${lot.identifier} · ${lot.titrant} ≈ ${lot.nominalConcentrationM} mol/L` : 'Titrant lot'} testID="screen-standardise">
      <Card title="Primary standard: KHP (potassium hydrogen phthalate)">
        <Text variant="caption" tone="muted">
          Molar mass from IUPAC (CIAAW) atomic weights. Dry the KHP as your method says, weigh it by difference, titrate
          to the end point and type the equivalence volume.
        </Text>
        <Field label="Mass of KHP" unit="g" keyboardType="decimal-pad" value={v.massG} onChangeText={set('massG')} testID="std-mass" />
        <Field label="Purity from the certificate" unit="mass fraction" keyboardType="decimal-pad" value={v.purity} onChangeText={set('purity')} hint="e.g. 0.9998; 1 if empty" testID="std-purity" />
        <Field label="Equivalence volume" unit="mL" keyboardType="decimal-pad" value={v.equivalenceVolumeMl} onChangeText={set('equivalenceVolumeMl')} testID="std-ve" />
      </Card>
      <Card title="Uncertainties (standard, optional)">
        <Field label="u(mass)" unit="g" keyboardType="decimal-pad" value={v.uMassG} onChangeText={set('uMassG')} hint={`${STANDARDISATION_DEFAULTS.uMassG.value} g if empty: ${STANDARDISATION_DEFAULTS.uMassG.source}`} testID="std-umass" />
        <Field label="u(purity)" keyboardType="decimal-pad" value={v.uPurity} onChangeText={set('uPurity')} hint={`${STANDARDISATION_DEFAULTS.uPurity.value} if empty: ${STANDARDISATION_DEFAULTS.uPurity.source}`} testID="std-upurity" />
        <Field label="u(equivalence volume)" unit="mL" keyboardType="decimal-pad" value={v.uEquivalenceVolumeMl} onChangeText={set('uEquivalenceVolumeMl')} hint={`${STANDARDISATION_DEFAULTS.uEquivalenceVolumeMl.value} mL if empty: ${STANDARDISATION_DEFAULTS.uEquivalenceVolumeMl.source}`} testID="std-uve" />
        <Field label="Relative repeatability" keyboardType="decimal-pad" value={v.uRepeatabilityRel} onChangeText={set('uRepeatabilityRel')} hint={`${STANDARDISATION_DEFAULTS.uRepeatabilityRel.value} if empty: ${STANDARDISATION_DEFAULTS.uRepeatabilityRel.source}`} testID="std-urep" />
      </Card>
      {started && built.preview ? (
        <Card title="Result" testID="std-result">
          <ResultRow label="c(NaOH)" value={withUncertainty(built.preview.concentrationM, built.preview.uConcentrationM, 'mol/L')} testID="std-concentration" />
          {built.preview.budget.map((row) => (
            <ResultRow key={row.name} label={row.name} value={`${row.contribution.toExponential(2)} mol/L`} />
          ))}
          {built.preview.assumptions.map((a) => (
            <Text key={a} variant="caption" tone="muted">
              Assumed: {a}
            </Text>
          ))}
          <Text variant="caption" tone="muted">
            Budget after GUM (JCGM 100:2008), in the form of Eurachem/CITAC QUAM example A2. The server recomputes it when
            you save and combines it with the lot’s other standardisations.
          </Text>
        </Card>
      ) : null}
      {started && built.issues ? (
        <Card tone="warn">
          {built.issues.map((i) => (
            <Text key={i} variant="caption">
              {i}
            </Text>
          ))}
        </Card>
      ) : null}
      <ErrorNote error={save.error} />
      <Button
        label="Save standardisation"
        disabled={!built.body}
        busy={save.isPending}
        onPress={() => built.body && save.mutate({ lotId: lotId!, body: built.body }, { onSuccess: () => router.replace('/calibrate') })}
        testID="std-save"
      />
      <CarbonDioxideNote />
      <SafetyNote compact />
    </Screen>
  );
}
