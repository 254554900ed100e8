import { z } from 'zod';
import { importBodySchema, importPreviewBodySchema } from '../../shared/schemas/desk';
import { route } from '../http/routes';
import * as imports from '../services/runs-import';

export const importRoutes = [
  route({
    method: 'post',
    path: '/labs/:labId/imports/preview',
    access: ['analyst', 'manager'],
    labParam: 'labId',
    body: importPreviewBodySchema.extend({ rateMlPerS: z.number().positive().optional() }),
    summary: 'Parse a CSV file: columns, first rows, a suggested mapping; with a mapping, the readings and every row error.',
    handler: ({ body }) => imports.preview(body.csv, body.mapping, body.rateMlPerS),
  }),
  route({
    method: 'post',
    path: '/labs/:labId/imports',
    access: ['analyst', 'manager'],
    labParam: 'labId',
    body: importBodySchema,
    status: 201,
    summary: 'Import a CSV file as a run; any bad row refuses the whole file (nothing partial).',
    handler: ({ app, caller, lab, body }) => imports.importRun(app, caller!, lab!.id, body),
  }),
];
