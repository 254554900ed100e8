import { z } from 'zod';
import { changeRoleBodySchema, inviteBodySchema } from '../../shared/schemas/auth';
import { isUuid, route } from '../http/routes';
import { notFound } from '../http/errors';
import { auditPage } from '../services/audit';
import * as labs from '../services/labs';

const userParam = (id: string) => {
  if (!isUuid(id)) throw notFound('Member');
  return id;
};

const auditQuerySchema = z.object({
  /** `nextBefore` of the previous page (an entry id; the page continues below its (at, id)). */
  before: z.uuid().optional(),
  limit: z.coerce.number().int().min(1).max(200).default(50),
});

export const labRoutes = [
  route({
    method: 'get',
    path: '/labs/:labId/members',
    access: ['manager', 'analyst', 'viewer'],
    labParam: 'labId',
    summary: 'Members of the lab with their roles.',
    handler: ({ app, lab }) => labs.listMembers(app, lab!.id),
  }),
  route({
    method: 'patch',
    path: '/labs/:labId/members/:userId',
    access: ['manager'],
    labParam: 'labId',
    body: changeRoleBodySchema,
    summary: "Change a member's role.",
    handler: ({ app, caller, lab, params, body }) => labs.changeRole(app, caller!, lab!.id, userParam(params.userId), body.role),
  }),
  route({
    method: 'post',
    path: '/labs/:labId/members/:userId/disable',
    access: ['manager'],
    labParam: 'labId',
    summary: "Disable a member's account; their sessions end at once.",
    handler: ({ app, caller, lab, params }) => labs.setDisabled(app, caller!, lab!.id, userParam(params.userId), true),
  }),
  route({
    method: 'post',
    path: '/labs/:labId/members/:userId/enable',
    access: ['manager'],
    labParam: 'labId',
    summary: 'Enable a disabled account again.',
    handler: ({ app, caller, lab, params }) => labs.setDisabled(app, caller!, lab!.id, userParam(params.userId), false),
  }),
  route({
    method: 'get',
    path: '/labs/:labId/invitations',
    access: ['manager'],
    labParam: 'labId',
    summary: 'Open invitations of the lab.',
    handler: ({ app, lab }) => labs.listInvitations(app, lab!.id),
  }),
  route({
    method: 'post',
    path: '/labs/:labId/invitations',
    access: ['manager'],
    labParam: 'labId',
    body: inviteBodySchema,
    status: 201,
    summary: 'Invite an address with a role; the e-mail goes out through the outbox.',
    handler: ({ app, caller, lab, body }) => labs.invite(app, caller!, lab!.id, body),
  }),
  route({
    method: 'delete',
    path: '/labs/:labId/invitations/:invitationId',
    access: ['manager'],
    labParam: 'labId',
    status: 204,
    summary: 'Withdraw an open invitation.',
    handler: async ({ app, caller, lab, params }) => {
      if (!isUuid(params.invitationId)) throw notFound('Open invitation');
      await labs.revokeInvitation(app, caller!, lab!.id, params.invitationId);
    },
  }),
  route({
    method: 'get',
    path: '/labs/:labId/audit',
    access: ['manager'],
    labParam: 'labId',
    query: auditQuerySchema,
    summary: 'The lab audit trail, newest first (read only; nothing edits or deletes it).',
    handler: ({ app, lab, query }) => auditPage(app, lab!.id, query),
  }),
];
