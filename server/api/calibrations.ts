import {
  createBuretteBodySchema,
  createDripCalibrationBodySchema,
  createDripSettingBodySchema,
  createElectrodeBodySchema,
  createElectrodeCalibrationBodySchema,
  createStandardisationBodySchema,
  createTitrantLotBodySchema,
  updateBuretteBodySchema,
  updateDripSettingBodySchema,
  updateElectrodeBodySchema,
  updateLabCalibrationSettingsBodySchema,
  updateRecordBodySchema,
  updateTitrantLotBodySchema,
} from '../../shared/schemas/calibration-api';
import { notFound } from '../http/errors';
import { isUuid, route } from '../http/routes';
import * as cal from '../services/calibrations';

/** Every member reads the lab's calibrations (the bench needs them); only managers make or change them. */
const READERS = ['manager', 'analyst', 'viewer'] as const;
const MANAGERS = ['manager'] as const;

/** A record id in the path; a malformed one is as absent as another lab's. */
const idParam = (params: Record<string, string>, name: string, what: string) => {
  const id = params[name];
  if (!isUuid(id)) throw notFound(what);
  return id;
};

export const calibrationRoutes = [
  route({
    method: 'get',
    path: '/labs/:labId/calibrations',
    access: READERS,
    labParam: 'labId',
    summary: 'Every burette, drip setting, electrode and titrant lot of the lab with its calibration history and what is in force.',
    handler: ({ app, lab }) => cal.overview(app, lab!.id),
  }),
  route({
    method: 'put',
    path: '/labs/:labId/calibration-settings',
    access: MANAGERS,
    labParam: 'labId',
    body: updateLabCalibrationSettingsBodySchema,
    summary: "Change the lab's acceptance limits and calibration ages.",
    handler: ({ app, caller, lab, body }) => cal.updateSettings(app, caller!, lab!.id, body),
  }),

  route({
    method: 'post',
    path: '/labs/:labId/burettes',
    access: MANAGERS,
    labParam: 'labId',
    body: createBuretteBodySchema,
    status: 201,
    summary: 'Register a burette (capacity, class; tolerance from ISO 385 / ASTM E287 or entered).',
    handler: ({ app, caller, lab, body }) => cal.createBurette(app, caller!, lab!.id, body),
  }),
  route({
    method: 'patch',
    path: '/labs/:labId/burettes/:buretteId',
    access: MANAGERS,
    labParam: 'labId',
    body: updateBuretteBodySchema,
    summary: 'Change the notes of a burette or retire it.',
    handler: ({ app, caller, lab, params, body }) =>
      cal.updateBurette(app, caller!, lab!.id, idParam(params, 'buretteId', 'Burette'), body),
  }),
  route({
    method: 'post',
    path: '/labs/:labId/burettes/:buretteId/drip-settings',
    access: MANAGERS,
    labParam: 'labId',
    body: createDripSettingBodySchema,
    status: 201,
    summary: 'Add a drip setting (stopcock setting, tip) to a burette.',
    handler: ({ app, caller, lab, params, body }) =>
      cal.createDripSetting(app, caller!, lab!.id, idParam(params, 'buretteId', 'Burette'), body),
  }),
  route({
    method: 'patch',
    path: '/labs/:labId/drip-settings/:settingId',
    access: MANAGERS,
    labParam: 'labId',
    body: updateDripSettingBodySchema,
    summary: 'Rename, annotate or retire a drip setting.',
    handler: ({ app, caller, lab, params, body }) =>
      cal.updateDripSetting(app, caller!, lab!.id, idParam(params, 'settingId', 'Drip setting'), body),
  }),
  route({
    method: 'post',
    path: '/labs/:labId/drip-settings/:settingId/calibrations',
    access: MANAGERS,
    labParam: 'labId',
    body: createDripCalibrationBodySchema,
    status: 201,
    summary: 'Record a drip-rate calibration (gravimetric, mark timing or drop count); the server computes the result.',
    handler: ({ app, caller, lab, params, body }) =>
      cal.createDripCalibration(app, caller!, lab!.id, idParam(params, 'settingId', 'Drip setting'), body),
  }),
  route({
    method: 'patch',
    path: '/labs/:labId/drip-calibrations/:calibrationId',
    access: MANAGERS,
    labParam: 'labId',
    body: updateRecordBodySchema,
    summary: 'Change the notes or expiry of a drip-rate calibration, or withdraw it with a reason.',
    handler: ({ app, caller, lab, params, body }) =>
      cal.updateRecord(app, caller!, lab!.id, 'drip-calibration', idParam(params, 'calibrationId', 'Drip-rate calibration'), body),
  }),

  route({
    method: 'post',
    path: '/labs/:labId/electrodes',
    access: MANAGERS,
    labParam: 'labId',
    body: createElectrodeBodySchema,
    status: 201,
    summary: 'Register a pH electrode.',
    handler: ({ app, caller, lab, body }) => cal.createElectrode(app, caller!, lab!.id, body),
  }),
  route({
    method: 'patch',
    path: '/labs/:labId/electrodes/:electrodeId',
    access: MANAGERS,
    labParam: 'labId',
    body: updateElectrodeBodySchema,
    summary: 'Change the description of an electrode or retire it.',
    handler: ({ app, caller, lab, params, body }) =>
      cal.updateElectrode(app, caller!, lab!.id, idParam(params, 'electrodeId', 'Electrode'), body),
  }),
  route({
    method: 'post',
    path: '/labs/:labId/electrodes/:electrodeId/calibrations',
    access: MANAGERS,
    labParam: 'labId',
    body: createElectrodeCalibrationBodySchema,
    status: 201,
    summary: "Record an electrode calibration (2–5 buffers in mV); slope and offset judged on the lab's limits.",
    handler: ({ app, caller, lab, params, body }) =>
      cal.createElectrodeCalibration(app, caller!, lab!.id, idParam(params, 'electrodeId', 'Electrode'), body),
  }),
  route({
    method: 'patch',
    path: '/labs/:labId/electrode-calibrations/:calibrationId',
    access: MANAGERS,
    labParam: 'labId',
    body: updateRecordBodySchema,
    summary: 'Change the notes or expiry of an electrode calibration, or withdraw it with a reason.',
    handler: ({ app, caller, lab, params, body }) =>
      cal.updateRecord(app, caller!, lab!.id, 'electrode-calibration', idParam(params, 'calibrationId', 'Electrode calibration'), body),
  }),

  route({
    method: 'post',
    path: '/labs/:labId/titrant-lots',
    access: MANAGERS,
    labParam: 'labId',
    body: createTitrantLotBodySchema,
    status: 201,
    summary: 'Register a titrant lot (nominal concentration, prepared date, storage).',
    handler: ({ app, caller, lab, body }) => cal.createLot(app, caller!, lab!.id, body),
  }),
  route({
    method: 'patch',
    path: '/labs/:labId/titrant-lots/:lotId',
    access: MANAGERS,
    labParam: 'labId',
    body: updateTitrantLotBodySchema,
    summary: 'Change the storage, notes or expiry of a titrant lot, or retire it.',
    handler: ({ app, caller, lab, params, body }) =>
      cal.updateLot(app, caller!, lab!.id, idParam(params, 'lotId', 'Titrant lot'), body),
  }),
  route({
    method: 'post',
    path: '/labs/:labId/titrant-lots/:lotId/standardisations',
    access: MANAGERS,
    labParam: 'labId',
    body: createStandardisationBodySchema,
    status: 201,
    summary: 'Record a standardisation against a primary standard (KHP by default); the server computes c and its GUM budget.',
    handler: ({ app, caller, lab, params, body }) =>
      cal.createStandardisation(app, caller!, lab!.id, idParam(params, 'lotId', 'Titrant lot'), body),
  }),
  route({
    method: 'patch',
    path: '/labs/:labId/standardisations/:standardisationId',
    access: MANAGERS,
    labParam: 'labId',
    body: updateRecordBodySchema,
    summary: 'Change the notes or expiry of a standardisation, or withdraw it with a reason.',
    handler: ({ app, caller, lab, params, body }) =>
      cal.updateRecord(app, caller!, lab!.id, 'standardisation', idParam(params, 'standardisationId', 'Standardisation'), body),
  }),
];
