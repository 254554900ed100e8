import { describe, expect, it } from 'vitest';
import { calibrateElectrode, mvToPH } from '../../../shared/calibration';
import { labCalibrationSettingsSchema, type CalibrationOverview, type DripCalibration, type ElectrodeCalibrationRecord, type Standardisation } from '../../../shared/schemas/calibration-api';
import { applyChoice, calibrationOptions, choiceWarnings, MANUAL, NO_ELECTRODE, resolveChoice } from './calibrationChoice';
import { runSetupSchema, setupWarnings } from './setup';

// The records below are invented (demo-like); only the electrode numbers are checked against outside values.
const NOW = Date.UTC(2026, 2, 10, 12);
const HOUR = 3_600_000;
const iso = (ms: number) => new Date(ms).toISOString();
const meta = (id: string, performedMs: number, expiresMs: number, status: DripCalibration['status'], extra: Partial<{ accepted: boolean; acceptanceReasons: string[] }> = {}) => ({
  id,
  performedAt: iso(performedMs),
  performedBy: null,
  performedByName: null,
  expiresAt: iso(expiresMs),
  accepted: extra.accepted ?? true,
  acceptanceReasons: extra.acceptanceReasons ?? [],
  notes: '',
  withdrawnAt: null,
  withdrawnReason: null,
  isDemo: true,
  status,
});

const drip = (id: string, performedMs: number, status: DripCalibration['status'], over: Partial<DripCalibration> = {}): DripCalibration => ({
  ...meta(id, performedMs, performedMs + 30 * 24 * HOUR, status),
  dripSettingId: 's1',
  method: 'gravimetric',
  inputs: null,
  result: null,
  rateMlPerS: 0.02,
  uRateMlPerS: 0.0001,
  drainVolumeMl: null,
  deliveredVolumeMl: 5,
  dropsPerMin: null,
  dropVolumeMl: null,
  ...over,
});

// An ideal electrode at 25 °C: E = −S (pH − 7), S = 59.159 mV/pH (Nernst slope from CODATA 2018 R and F, as listed
// in shared/reference/check-values.md), calibrated at the IUPAC primary standards KHP 4.005 and borax 9.180
// (Buck et al., Pure Appl. Chem. 74 (2002) 2169, values at 25 °C).
const S25 = 59.159;
const ideal = calibrateElectrode({ temperatureC: 25, points: [4.005, 9.18].map((pH) => ({ pH, mV: -S25 * (pH - 7) })) });
const electrodeCal = (id: string, performedMs: number, status: ElectrodeCalibrationRecord['status'], over: Partial<ElectrodeCalibrationRecord> = {}): ElectrodeCalibrationRecord => ({
  ...meta(id, performedMs, performedMs + 24 * HOUR, status),
  electrodeId: 'e1',
  temperatureC: 25,
  points: ideal.points,
  slopePct: ideal.slopePct,
  slopeMvPerPH: ideal.slopeMvPerPH,
  offsetMv: ideal.offsetMv,
  limits: { minSlopePct: 95, maxSlopePct: 105, maxAbsOffsetMv: 30 },
  result: null,
  ...over,
});

const std = (id: string, performedMs: number): Standardisation => ({
  ...meta(id, performedMs, performedMs + 14 * 24 * HOUR, 'in-force'),
  lotId: 'lot1',
  standard: 'KHP',
  massG: 0.4,
  purity: 1,
  molarMassGPerMol: 204.22,
  equivalenceVolumeMl: 19.9,
  runId: null,
  inputs: null,
  concentrationM: 0.10214,
  uConcentrationM: 0.0001,
  budget: [],
});

function overview(): CalibrationOverview {
  return {
    labId: 'lab1',
    settings: labCalibrationSettingsSchema.parse({}),
    asOf: iso(NOW),
    burettes: [
      {
        id: 'b1', identifier: 'B-07', capacityMl: 50, class: 'A', toleranceMl: 0.05, toleranceSource: '', notes: '', retired: false, isDemo: true,
        settings: [
          {
            id: 's1', buretteId: 'b1', stopcockSetting: '¼ turn', tip: '', notes: '', retired: false, isDemo: true,
            calibrations: [drip('d-old', NOW - 10 * 24 * HOUR, 'superseded', { rateMlPerS: 0.019 }), drip('d-now', NOW - 2 * 24 * HOUR, 'in-force'), drip('d-drops', NOW - HOUR, 'in-force', { method: 'drop-count', rateMlPerS: null })],
            inForceId: 'd-now',
            inForceDropCountId: 'd-drops',
          },
          {
            id: 's2', buretteId: 'b1', stopcockSetting: '½ turn', tip: '', notes: '', retired: false, isDemo: true,
            calibrations: [drip('d-mark', NOW - 40 * 24 * HOUR, 'expired', { dripSettingId: 's2', method: 'mark-timing', rateMlPerS: 0.05, drainVolumeMl: 61.2 })],
            inForceId: null,
            inForceDropCountId: null,
          },
        ],
      },
    ],
    electrodes: [
      { id: 'e1', identifier: 'GE-3', description: '', retired: false, isDemo: true, calibrations: [electrodeCal('c-now', NOW - 2 * HOUR, 'in-force')], inForceId: 'c-now' },
      {
        id: 'e2', identifier: 'GE-9', description: '', retired: false, isDemo: true,
        calibrations: [electrodeCal('c-bad', NOW - HOUR, 'failed', { accepted: false, acceptanceReasons: ['slope 88.0 % is outside 95–105 %'] })],
        inForceId: null,
      },
    ],
    lots: [
      {
        id: 'lot1', identifier: 'D-0312', titrant: 'NaOH', nominalConcentrationM: 0.1, preparedAt: iso(NOW - 3 * 24 * HOUR), storage: '', notes: '', expiresAt: null, retired: false, isDemo: true,
        standardisations: [std('st1', NOW - 24 * HOUR)],
        current: { concentrationM: 0.10214, uConcentrationM: 0.0001, n: 1, sdM: null, standardisationIds: ['st1'], validUntil: iso(NOW + 13 * 24 * HOUR), method: 'single' },
      },
    ],
  };
}

const draft = () => ({
  label: 'benzoic',
  sample: { volumeMl: 50, massG: 0.2 },
  titrant: { source: 'manual', concentrationM: undefined },
  delivery: { source: 'manual', rateMlPerS: undefined, startBuretteMl: 0.4 },
  electrode: undefined,
  temperatureC: 25,
});

describe('calibration choice for run setup', () => {
  it('offers one option per subject, in force first, and never a drop count as a rate', () => {
    const o = calibrationOptions(overview(), NOW);
    expect(o.drip.map((x) => [x.id, x.state])).toEqual([['d-now', 'in-force'], ['d-mark', 'expired']]);
    expect(o.electrode.map((x) => [x.id, x.state])).toEqual([['c-now', 'in-force'], ['c-bad', 'failed']]);
    expect(o.titrant.map((x) => [x.id, x.state, x.fill.standardisedOn])).toEqual([['lot1', 'in-force', '2026-03-09']]);
  });

  it('defaults to the records in force and fills the setup with their values and ids', () => {
    const o = calibrationOptions(overview(), NOW);
    const choice = resolveChoice({}, o);
    expect(choice).toEqual({ titrant: 'lot1', drip: 'd-now', electrode: 'c-now' });
    const setup = runSetupSchema.parse(applyChoice(draft(), choice, o));
    expect(setup.titrant).toMatchObject({ source: 'lab', lotId: 'lot1', standardisationIds: ['st1'], concentrationM: 0.10214, uConcentrationM: 0.0001, standardisedOn: '2026-03-09' });
    expect(setup.delivery).toMatchObject({ source: 'lab', calibrationId: 'd-now', rateMlPerS: 0.02, uRateMlPerS: 0.0001, startBuretteMl: 0.4 });
    expect(setup.delivery.drainVolumeMl).toBeUndefined();
    expect(setup.electrode).toMatchObject({ source: 'lab', calibrationId: 'c-now', temperatureC: 25, calibratedAtMs: NOW - 2 * HOUR });
    // No "typed by hand" warnings once the lab's records are chosen, and nothing to warn about these.
    const w = [...setupWarnings(setup, NOW, overview().settings.electrodeMaxAgeHours), ...choiceWarnings(choice, o)];
    expect(w.join('\n')).not.toMatch(/typed by hand|No electrode/);
    expect(choiceWarnings(choice, o)).toEqual([]);
  });

  it('carries the electrode slope and offset so mV turns into pH (IUPAC phosphate 6.865 at 25 °C, Buck et al. 2002)', () => {
    const o = calibrationOptions(overview(), NOW);
    const e = runSetupSchema.parse(applyChoice(draft(), resolveChoice({}, o), o)).electrode!;
    expect(e.slopeMvPerPH).toBeCloseTo(-S25, 3);
    expect(e.offsetMv).toBeCloseTo(0, 6);
    expect(mvToPH(e, -S25 * (6.865 - 7))).toBeCloseTo(6.865, 6);
  });

  it('takes the drain volume of a mark-timing fit and warns when the chosen record is expired or failed', () => {
    const o = calibrationOptions(overview(), NOW);
    const choice = resolveChoice({ drip: 'd-mark', electrode: 'c-bad' }, o);
    const setup = runSetupSchema.parse(applyChoice(draft(), choice, o));
    expect(setup.delivery).toMatchObject({ calibrationId: 'd-mark', rateMlPerS: 0.05, drainVolumeMl: 61.2 });
    const w = choiceWarnings(choice, o).join('\n');
    expect(w).toMatch(/B-07 · ½ turn is expired/);
    expect(w).toMatch(/GE-9 is failed its acceptance.*slope 88\.0 %/);
  });

  it('judges age as of now, not as of the cached overview: in force yesterday may be past the limit today', () => {
    // A manager extended the record's expiry to 48 h; the lab's limit stays 24 h. At NOW + 23 h it is 25 h old.
    const ov = overview();
    ov.electrodes[0].calibrations[0].expiresAt = iso(NOW - 2 * HOUR + 48 * HOUR);
    const later = NOW + 23 * HOUR;
    const o = calibrationOptions(ov, later);
    expect(o.electrode.find((x) => x.id === 'c-now')?.state).toBe('stale');
    expect(resolveChoice({}, o).electrode).toBe(NO_ELECTRODE);
    const choice = resolveChoice({ electrode: 'c-now' }, o);
    const setup = runSetupSchema.parse(applyChoice(draft(), choice, o));
    expect(setupWarnings(setup, later, 24).join('\n')).toMatch(/25 h old \(limit 24 h\)/);
    const expired = calibrationOptions(ov, NOW + 47 * HOUR);
    expect(expired.electrode.find((x) => x.id === 'c-now')?.state).toBe('expired');
  });

  it('keeps typing by hand possible, with its warnings', () => {
    const o = calibrationOptions(overview(), NOW);
    const choice = resolveChoice({ titrant: MANUAL, drip: MANUAL, electrode: MANUAL }, o);
    const d = { ...draft(), titrant: { source: 'manual', concentrationM: 0.1 }, delivery: { source: 'manual', rateMlPerS: 0.03, startBuretteMl: 0 } };
    const setup = runSetupSchema.parse(applyChoice(d, choice, o));
    expect(setup.delivery).toMatchObject({ source: 'manual', rateMlPerS: 0.03 });
    const w = setupWarnings(setup, NOW).join('\n');
    expect(w).toMatch(/Drip rate typed by hand/);
    expect(w).toMatch(/Titrant concentration typed by hand/);
  });

  it('falls back to typing when there is no overview or a picked record has gone', () => {
    expect(resolveChoice({}, null)).toEqual({ titrant: MANUAL, drip: MANUAL, electrode: NO_ELECTRODE });
    expect(resolveChoice({ drip: 'gone' }, calibrationOptions(overview(), NOW)).drip).toBe('d-now');
  });
});
