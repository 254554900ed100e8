import express, { Router } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { z } from 'zod';
import { auditLog } from '../../db/schema';
import { authFixture, type AuthFixture } from '../auth/test-fixture';
import { closeTemplate } from '../testing/db';
import { errorHandler } from './errors';
import { mountRoutes, recordLab, route } from './routes';

// A record route resolved through `labOf`, mounted on a throwaway router (not part of the API).
let fx: AuthFixture;
let app: express.Express;
let ownRecord: string;
let otherRecord: string;
const countBody = z.object({ n: z.number().int() });
let quickParses = 0;

beforeAll(async () => {
  fx = await authFixture();
  const router = Router();
  mountRoutes(
    router,
    [
      route({
        method: 'get',
        path: '/records/:recordId',
        access: ['manager', 'analyst'],
        labOf: recordLab(auditLog, auditLog.id, auditLog.labId, 'recordId'),
        summary: 'test only',
        handler: ({ lab }) => ({ lab: lab!.id }),
      }),
      route({
        method: 'post',
        path: '/parsed',
        access: 'signedIn',
        body: countBody,
        parseBody: (raw) => {
          quickParses++;
          return countBody.parse(raw);
        },
        summary: 'test only',
        handler: ({ body }) => body,
      }),
    ],
    fx.ctx,
  );
  app = express().use(express.json(), router, errorHandler(() => {}));
  const rows = await fx.database.db
    .insert(auditLog)
    .values([
      { labId: fx.labA.id, action: 'test', entity: 'test' },
      { labId: fx.labB.id, action: 'test', entity: 'test' },
    ])
    .returning({ id: auditLog.id });
  [ownRecord, otherRecord] = rows.map((r) => r.id);
});
afterAll(async () => {
  await fx.database.close();
  await closeTemplate();
});

const get = async (path: string, userId: string) =>
  request(app).get(path).set('authorization', `Bearer ${(await fx.session(userId)).accessToken}`);

describe('record routes (labOf)', () => {
  it('a record of the own lab is reachable with the right role', async () => {
    const res = await get(`/records/${ownRecord}`, fx.people.analyst.id);
    expect(res.status).toBe(200);
    expect(res.body.lab).toBe(fx.labA.id);
    expect((await get(`/records/${ownRecord}`, fx.people.viewer.id)).status).toBe(403);
  });

  it('a record of another lab answers exactly like a record that does not exist', async () => {
    const other = await get(`/records/${otherRecord}`, fx.people.manager.id);
    const missing = await get('/records/00000000-0000-4000-8000-000000000000', fx.people.manager.id);
    const malformed = await get('/records/not-a-uuid', fx.people.manager.id);
    for (const r of [other, missing, malformed]) {
      expect(r.status).toBe(404);
      expect(r.body).toEqual(other.body);
    }
  });

  it('a lab route for a lab that does not exist or a malformed id is 404 too', async () => {
    const auth = `Bearer ${(await fx.session(fx.people.manager.id)).accessToken}`;
    await fx.api().get('/api/labs/00000000-0000-4000-8000-000000000000/members').set('authorization', auth).expect(404);
    await fx.api().get('/api/labs/nope/members').set('authorization', auth).expect(404);
  });

  it('refuses to declare a role route without a way to find its lab', () => {
    expect(() => route({ method: 'get', path: '/x', access: ['manager'], summary: 'x', handler: () => ({}) })).toThrow(/labParam or labOf/);
  });
});

describe('parseBody', () => {
  it('parses the body in place of the schema, and its ZodError answers 400 as the schema would', async () => {
    const token = (await fx.session(fx.people.analyst.id)).accessToken;
    const post = (body: unknown) => request(app).post('/parsed').set('authorization', `Bearer ${token}`).send(body as object);
    const before = quickParses;
    const ok = await post({ n: 3, extra: true });
    expect(ok.status).toBe(200);
    expect(ok.body).toEqual({ n: 3 });
    const bad = await post({ n: 1.5 });
    expect(bad.status).toBe(400);
    expect(quickParses - before).toBe(2);
  });
});
