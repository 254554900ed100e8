import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runs } from '../../db/schema';
import { runComments } from '../../db/schema/desk';
import { authFixture, type AuthFixture } from '../auth/test-fixture';
import { closeTemplate } from '../testing/db';

// The fuzz suite (tests/reliability) found these answering 500: PostgreSQL refuses U+0000 in text and jsonb, the
// year 0000, and years after 9999 as a JavaScript Date writes them (+010000-…).
let fx: AuthFixture;
let token: string;
const runId = crypto.randomUUID();

beforeAll(async () => {
  fx = await authFixture();
  token = (await fx.session(fx.people.manager.id)).accessToken;
  await fx.database.db.insert(runs).values({ id: runId, labId: fx.labA.id, analystId: fx.people.analyst.id, sampleName: 'NUL test run' });
});
afterAll(async () => {
  await fx.database.close();
  await closeTemplate();
});

describe('text with the NUL character', () => {
  it('in a stored text field answers 400 invalid_text, and nothing is stored', async () => {
    const res = await fx.api().post(`/api/runs/${runId}/comments`).set('authorization', `Bearer ${token}`).send({ body: 'before\u0000after' });
    expect(res.status, JSON.stringify(res.body)).toBe(400);
    expect(res.body.error.code).toBe('invalid_text');
    expect(await fx.database.db.select().from(runComments).where(eq(runComments.runId, runId))).toEqual([]);
    const ok = await fx.api().post(`/api/runs/${runId}/comments`).set('authorization', `Bearer ${token}`).send({ body: 'plain text' });
    expect(ok.status).toBe(201);
  });

  it('in a field that also goes to the audit log (jsonb) answers 400 invalid_text', async () => {
    const b = await fx.api().post(`/api/labs/${fx.labA.id}/burettes`).set('authorization', `Bearer ${token}`).send({ identifier: 'NUL-1', capacityMl: 50, class: 'A' });
    expect(b.status).toBe(201);
    const res = await fx.api().patch(`/api/labs/${fx.labA.id}/burettes/${b.body.id}`).set('authorization', `Bearer ${token}`).send({ notes: 'checked\u0000' });
    expect(res.status, JSON.stringify(res.body)).toBe(400);
    expect(res.body.error.code).toBe('invalid_text');
  });

  it('in a sync payload rejects that change only; the rest of the batch goes in', async () => {
    const [bad, good] = [crypto.randomUUID(), crypto.randomUUID()];
    const at = Date.now();
    const res = await fx
      .api()
      .post('/api/sync/push')
      .set('authorization', `Bearer ${token}`)
      .send({
        deviceId: crypto.randomUUID(),
        sentAt: at,
        changes: [
          { id: bad, kind: 'run', seq: 1, recordedAt: at, payload: { labId: fx.labA.id, sampleName: 'a\u0000b' } },
          { id: good, kind: 'run', seq: 2, recordedAt: at, payload: { labId: fx.labA.id, sampleName: 'fine' } },
        ],
      });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body.results.map((r: { outcome: string }) => r.outcome)).toEqual(['rejected', 'accepted']);
    expect(res.body.results[0].reason).toMatch(/NUL/);
  });

  it('in a query parameter answers 400 invalid_text', async () => {
    const res = await fx.api().get(`/api/labs/${fx.labA.id}/runs`).query({ q: 'acid\u0000' }).set('authorization', `Bearer ${token}`);
    expect(res.status, JSON.stringify(res.body)).toBe(400);
    expect(res.body.error.code).toBe('invalid_text');
  });
});

describe('times at the edge of what is stored', () => {
  const push = (recordedAt: number) =>
    fx
      .api()
      .post('/api/sync/push')
      .set('authorization', `Bearer ${token}`)
      .send({
        deviceId: crypto.randomUUID(),
        sentAt: Date.now(),
        changes: [{ id: crypto.randomUUID(), kind: 'run', seq: 1, recordedAt, payload: { labId: fx.labA.id, sampleName: 'edge time' } }],
      });

  it('a device time at the last moment of 9999 is stored; one after it is refused with 400', async () => {
    const last = Date.parse('9999-12-31T23:59:59.999Z');
    const ok = await push(last);
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
    expect(ok.body.results[0].outcome).toBe('accepted');
    const after = await push(last + 1);
    expect(after.status, JSON.stringify(after.body)).toBe(400);
    expect(after.body.error.code).toBe('invalid_input');
  });

  it('a calibration time in the year 0001 is stored; 0000 is refused with 400', async () => {
    const lot = (preparedAt: string) =>
      fx.api().post(`/api/labs/${fx.labA.id}/titrant-lots`).set('authorization', `Bearer ${token}`).send({ identifier: `L-${preparedAt}`, nominalConcentrationM: 0.1, preparedAt });
    expect((await lot('0001-01-01T00:00:00Z')).status).toBe(201);
    const bad = await lot('0000-01-01T00:00:00Z');
    expect(bad.status, JSON.stringify(bad.body)).toBe(400);
    expect(bad.body.error.code).toBe('invalid_input');
  });
});
