import { runs } from '../../db/schema';
import { commentBodySchema, runListQuerySchema } from '../../shared/schemas/desk';
import { recordLab, route } from '../http/routes';
import * as desk from '../services/runs-desk';

const ALL = ['manager', 'analyst', 'viewer'] as const;
/** The lab of the run named by :runId (unknown or other lab: 404 before the handler runs). */
export const runLab = recordLab(runs, runs.id, runs.labId, 'runId');

export const runRoutes = [
  route({
    method: 'get',
    path: '/labs/:labId/runs',
    access: ALL,
    labParam: 'labId',
    query: runListQuerySchema,
    summary: 'The lab’s runs: filters (analyst, sample, status, dates, titrant lot), search, sorting, server paging.',
    handler: ({ app, lab, query }) => desk.listRuns(app, lab!.id, query),
  }),
  route({
    method: 'get',
    path: '/runs/:runId',
    access: ALL,
    labOf: runLab,
    summary: 'A run with its readings (corrections shown), checkpoints, events, analysis, calibrations, comments, review and history.',
    handler: ({ app, caller, lab, params }) => desk.runDetail(app, caller!, lab!.id, params.runId),
  }),
  route({
    method: 'post',
    path: '/runs/:runId/comments',
    access: ALL,
    labOf: runLab,
    body: commentBodySchema,
    status: 201,
    summary: 'Add a comment to the run’s thread (viewers may comment).',
    handler: ({ app, caller, lab, params, body }) => desk.addComment(app, caller!, lab!.id, params.runId, body.body),
  }),
];
