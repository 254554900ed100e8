// Route-matrix expectations of the calibration routes (spread into the matrix of server/http/route-matrix.test.ts).
// Test support only: every cell builds a valid request against fresh records of the target lab.
import type { AuthFixture } from '../auth/test-fixture';
import * as repo from '../repos/calibrations';

type Row = { signedOut: number; analyst: number; manager: number; viewer: number };
type Req = { params?: Record<string, string>; body?: unknown };
type Entry = { request: (fx: AuthFixture, lab: { id: string }) => Promise<Req> | Req; own: Row; other: Row };

const uniq = () => Math.random().toString(36).slice(2, 10);
const OTHER: Row = { signedOut: 401, analyst: 404, manager: 404, viewer: 404 };
const READ: Row = { signedOut: 401, analyst: 200, manager: 200, viewer: 200 };
const CHANGE: Row = { signedOut: 401, analyst: 403, manager: 200, viewer: 403 };
const CREATE: Row = { ...CHANGE, manager: 201 };

async function burette(fx: AuthFixture, labId: string) {
  return repo.insertBurette(fx.database.db, {
    labId,
    identifier: `B-${uniq()}`,
    capacityMl: 50,
    class: 'A',
    toleranceMl: 0.05,
    toleranceSource: 'ISO 385:2005, ASTM E287',
  });
}
async function setting(fx: AuthFixture, labId: string) {
  const b = await burette(fx, labId);
  return repo.insertDripSetting(fx.database.db, { labId, buretteId: b.id, stopcockSetting: 'matrix' });
}
async function electrode(fx: AuthFixture, labId: string) {
  return repo.insertElectrode(fx.database.db, { labId, identifier: `E-${uniq()}` });
}
async function lot(fx: AuthFixture, labId: string) {
  return repo.insertLot(fx.database.db, { labId, identifier: `L-${uniq()}`, nominalConcentrationM: 0.1, preparedAt: new Date() });
}
const later = () => new Date(Date.now() + 86_400_000);

/** Stored records for the PATCH cells; their values only need to be well-formed (access is what is tested). */
async function dripCal(fx: AuthFixture, labId: string) {
  const s = await setting(fx, labId);
  return repo.insertDripCalibration(fx.database.db, {
    labId, dripSettingId: s.id, method: 'gravimetric', inputs: {}, result: {}, rateMlPerS: 0.02, uRateMlPerS: 0.0002,
    accepted: true, performedAt: new Date(), expiresAt: later(),
  });
}
async function electrodeCal(fx: AuthFixture, labId: string) {
  const e = await electrode(fx, labId);
  return repo.insertElectrodeCalibration(fx.database.db, {
    labId, electrodeId: e.id, temperatureC: 25, points: [], inputs: {}, slopePct: 99, slopeMvPerPH: -58.6, offsetMv: 2,
    limits: {}, accepted: true, result: {}, performedAt: new Date(), expiresAt: later(),
  });
}
/** A standardisation of the lab (also the calibration record the desk matrix attaches files to). */
export async function standardisation(fx: AuthFixture, labId: string) {
  const l = await lot(fx, labId);
  return repo.insertStandardisation(fx.database.db, {
    labId, lotId: l.id, standard: 'KHP', massG: 0.4, purity: 1, molarMassGPerMol: 204.22, equivalenceVolumeMl: 19.5,
    inputs: {}, concentrationM: 0.1, uConcentrationM: 0.0001, budget: [], performedAt: new Date(), expiresAt: later(),
  });
}

const delivery = { massG: 4.985, durationS: 250, waterTempC: 21.5 };

export const calibrationMatrix: Record<string, Entry> = {
  'GET /labs/:labId/calibrations': { request: (_fx, lab) => ({ params: { labId: lab.id } }), own: READ, other: OTHER },
  'PUT /labs/:labId/calibration-settings': {
    request: (_fx, lab) => ({ params: { labId: lab.id }, body: { dripRateMaxAgeDays: 30 } }),
    own: CHANGE,
    other: OTHER,
  },
  'POST /labs/:labId/burettes': {
    request: (_fx, lab) => ({ params: { labId: lab.id }, body: { identifier: `B-${uniq()}`, capacityMl: 50, class: 'A' } }),
    own: CREATE,
    other: OTHER,
  },
  'PATCH /labs/:labId/burettes/:buretteId': {
    request: async (fx, lab) => ({ params: { labId: lab.id, buretteId: (await burette(fx, lab.id)).id }, body: { notes: 'checked' } }),
    own: CHANGE,
    other: OTHER,
  },
  'POST /labs/:labId/burettes/:buretteId/drip-settings': {
    request: async (fx, lab) => ({
      params: { labId: lab.id, buretteId: (await burette(fx, lab.id)).id },
      body: { stopcockSetting: '¼ turn', tip: 'standard' },
    }),
    own: CREATE,
    other: OTHER,
  },
  'PATCH /labs/:labId/drip-settings/:settingId': {
    request: async (fx, lab) => ({ params: { labId: lab.id, settingId: (await setting(fx, lab.id)).id }, body: { tip: 'fine' } }),
    own: CHANGE,
    other: OTHER,
  },
  'POST /labs/:labId/drip-settings/:settingId/calibrations': {
    request: async (fx, lab) => ({
      params: { labId: lab.id, settingId: (await setting(fx, lab.id)).id },
      body: { method: 'gravimetric', inputs: { deliveries: [delivery, { ...delivery, massG: 4.99 }, { ...delivery, massG: 4.98 }] } },
    }),
    own: CREATE,
    other: OTHER,
  },
  'PATCH /labs/:labId/drip-calibrations/:calibrationId': {
    request: async (fx, lab) => ({ params: { labId: lab.id, calibrationId: (await dripCal(fx, lab.id)).id }, body: { notes: 'n' } }),
    own: CHANGE,
    other: OTHER,
  },
  'POST /labs/:labId/electrodes': {
    request: (_fx, lab) => ({ params: { labId: lab.id }, body: { identifier: `E-${uniq()}` } }),
    own: CREATE,
    other: OTHER,
  },
  'PATCH /labs/:labId/electrodes/:electrodeId': {
    request: async (fx, lab) => ({ params: { labId: lab.id, electrodeId: (await electrode(fx, lab.id)).id }, body: { description: 'd' } }),
    own: CHANGE,
    other: OTHER,
  },
  'POST /labs/:labId/electrodes/:electrodeId/calibrations': {
    request: async (fx, lab) => ({
      params: { labId: lab.id, electrodeId: (await electrode(fx, lab.id)).id },
      body: { temperatureC: 25, points: [{ buffer: 'KHP', mV: 174 }, { buffer: 'phosphate', mV: 7 }] },
    }),
    own: CREATE,
    other: OTHER,
  },
  'PATCH /labs/:labId/electrode-calibrations/:calibrationId': {
    request: async (fx, lab) => ({ params: { labId: lab.id, calibrationId: (await electrodeCal(fx, lab.id)).id }, body: { notes: 'n' } }),
    own: CHANGE,
    other: OTHER,
  },
  'POST /labs/:labId/titrant-lots': {
    request: (_fx, lab) => ({
      params: { labId: lab.id },
      body: { identifier: `L-${uniq()}`, nominalConcentrationM: 0.1, preparedAt: new Date().toISOString() },
    }),
    own: CREATE,
    other: OTHER,
  },
  'PATCH /labs/:labId/titrant-lots/:lotId': {
    request: async (fx, lab) => ({ params: { labId: lab.id, lotId: (await lot(fx, lab.id)).id }, body: { storage: 'PE bottle' } }),
    own: CHANGE,
    other: OTHER,
  },
  'POST /labs/:labId/titrant-lots/:lotId/standardisations': {
    request: async (fx, lab) => ({
      params: { labId: lab.id, lotId: (await lot(fx, lab.id)).id },
      body: { massG: 0.3888, equivalenceVolumeMl: 18.64 },
    }),
    own: CREATE,
    other: OTHER,
  },
  'PATCH /labs/:labId/standardisations/:standardisationId': {
    request: async (fx, lab) => ({
      params: { labId: lab.id, standardisationId: (await standardisation(fx, lab.id)).id },
      body: { notes: 'n' },
    }),
    own: CHANGE,
    other: OTHER,
  },
};
