import { attachments } from '../../db/schema/desk';
import { isUuid, recordLab, route } from '../http/routes';
import { notFound } from '../http/errors';
import * as files from '../services/runs-attachments';
import { runLab } from './runs';

const ALL = ['manager', 'analyst', 'viewer'] as const;
const attachmentLab = recordLab(attachments, attachments.id, attachments.labId, 'attachmentId');
const calibrationParam = (id: string) => {
  if (!isUuid(id)) throw notFound('Calibration');
  return id;
};

export const attachmentRoutes = [
  route({
    method: 'post',
    path: '/runs/:runId/attachments',
    access: ['analyst', 'manager'],
    labOf: runLab,
    status: 201,
    summary: 'Attach a photo or PDF to a run (multipart field "file"; size and type limits, type from content).',
    handler: ({ app, caller, lab, params, req, res }) => files.store(app, caller!, req, res, { labId: lab!.id, runId: params.runId }),
  }),
  route({
    method: 'post',
    path: '/labs/:labId/calibrations/:calibrationId/attachments',
    access: ['analyst', 'manager'],
    labParam: 'labId',
    status: 201,
    summary: 'Attach a file (e.g. a primary standard’s certificate) to a calibration of the lab.',
    handler: ({ app, caller, lab, params, req, res }) =>
      files.store(app, caller!, req, res, { labId: lab!.id, calibrationId: calibrationParam(params.calibrationId) }),
  }),
  route({
    method: 'get',
    path: '/labs/:labId/calibrations/:calibrationId/attachments',
    access: ALL,
    labParam: 'labId',
    summary: 'Files attached to a calibration.',
    handler: ({ app, lab, params }) => files.listForCalibration(app, lab!.id, calibrationParam(params.calibrationId)),
  }),
  route({
    method: 'get',
    path: '/attachments/:attachmentId',
    access: ALL,
    labOf: attachmentLab,
    summary: 'Download an attachment (always as a download, with its detected type).',
    handler: ({ app, lab, params, res }) => files.download(app, lab!.id, params.attachmentId, res),
  }),
];
