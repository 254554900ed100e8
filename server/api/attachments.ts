import { attachments } from '../../db/schema/desk';
import type { ServerContext } from '../auth/context';
import { isUuid, recordLab, route } from '../http/routes';
import { notFound } from '../http/errors';
import { isCalibrationOfLab } from '../repos/calibrations';
import * as files from '../services/runs-attachments';
import { runLab } from './runs';

const ALL = ['manager', 'analyst', 'viewer'] as const;
const attachmentLab = recordLab(attachments, attachments.id, attachments.labId, 'attachmentId');
/** A calibration record of this lab (another lab's is not found), so no file is attached to nothing. */
const calibrationParam = async (app: ServerContext, labId: string, id: string) => {
  if (!isUuid(id) || !(await isCalibrationOfLab(app.database.db, labId, id))) throw notFound('Calibration');
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
    handler: async ({ app, caller, lab, params, req, res }) =>
      files.store(app, caller!, req, res, { labId: lab!.id, calibrationId: await calibrationParam(app, lab!.id, params.calibrationId) }),
  }),
  route({
    method: 'get',
    path: '/labs/:labId/calibrations/:calibrationId/attachments',
    access: ALL,
    labParam: 'labId',
    summary: 'Files attached to a calibration.',
    handler: async ({ app, lab, params }) => files.listForCalibration(app, lab!.id, await calibrationParam(app, lab!.id, params.calibrationId)),
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
