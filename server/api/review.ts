import { approveBodySchema, reopenBodySchema, returnBodySchema, submitBodySchema } from '../../shared/schemas/desk';
import { route } from '../http/routes';
import * as review from '../services/runs-review';
import { runLab } from './runs';

export const reviewRoutes = [
  route({
    method: 'post',
    path: '/runs/:runId/submit',
    access: ['analyst', 'manager'],
    labOf: runLab,
    body: submitBodySchema,
    summary: 'Submit the run for review; the lab’s managers get an e-mail.',
    handler: ({ app, caller, lab, params, body }) => review.submit(app, caller!, lab!.id, params.runId, body.note),
  }),
  route({
    method: 'post',
    path: '/runs/:runId/return',
    access: ['manager'],
    labOf: runLab,
    body: returnBodySchema,
    summary: 'Return a submitted run to the analyst with a comment (e-mailed).',
    handler: ({ app, caller, lab, params, body }) => review.returnRun(app, caller!, lab!.id, params.runId, body.comment),
  }),
  route({
    method: 'post',
    path: '/runs/:runId/approve',
    access: ['manager'],
    labOf: runLab,
    body: approveBodySchema,
    summary: 'Approve a submitted run: needs the password again; audited with time and meaning; locks the revision.',
    handler: ({ app, caller, lab, params, body }) => review.approve(app, caller!, lab!.id, params.runId, body),
  }),
  route({
    method: 'post',
    path: '/runs/:runId/revisions',
    access: ['analyst', 'manager'],
    labOf: runLab,
    body: reopenBodySchema,
    status: 201,
    summary: 'Open a new revision of an approved run, with a reason, so it can be changed and reviewed again.',
    handler: ({ app, caller, lab, params, body }) => review.reopen(app, caller!, lab!.id, params.runId, body.reason),
  }),
];
