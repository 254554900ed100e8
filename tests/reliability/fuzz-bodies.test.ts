import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { apiRoutes } from '../../server/api';
import { authFixture, type AuthFixture } from '../../server/auth/test-fixture';
import { describeRoute } from '../../server/http/routes';
import { closeTemplate } from '../../server/testing/db';
import { demoRun, insertDemoRun } from '../../server/demo/runs';
import { bodyArbitrary } from './body-arbitrary';

/**
 * Fuzzed request bodies and queries for every API route, generated from the route's own zod schemas: the server may
 * refuse them (4xx) but must never fail (5xx). Signed in as a manager of the lab, so bodies reach the handlers.
 */
const FULL = process.env.RELIABILITY === 'full';
const PER_ROUTE = FULL ? 1000 : 25;
const SEED = Number(process.env.FUZZ_SEED ?? Date.now() % 2 ** 31);

let fx: AuthFixture;
const tally: { route: string; sent: number; statuses: Record<number, number> }[] = [];

// One real run of lab A (invented demo data) under an id that pathFor hands out, so run routes reach their handlers
// for some requests instead of answering 404 to all of them.
const REAL_RUN = '00000000-0000-4000-8000-000000000001';

beforeAll(async () => {
  fx = await authFixture();
  const r = demoRun({ labId: fx.labA.id, analystId: fx.people.analyst.id, index: 0, createdAt: new Date(), status: 'submitted' });
  await insertDemoRun(fx.database.db, {
    run: { ...r.run, id: REAL_RUN },
    readings: r.readings.map((x) => ({ ...x, runId: REAL_RUN })),
    checkpoints: r.checkpoints.map((x) => ({ ...x, runId: REAL_RUN })),
  });
});
afterAll(async () => {
  console.log(`fuzz seed ${SEED}; ${PER_ROUTE} bodies per route`);
  for (const t of tally) console.log(`  ${t.route}: ${t.sent} sent, statuses ${JSON.stringify(t.statuses)}`);
  await fx.database.close();
  await closeTemplate();
});

function pathFor(path: string, variant: number): string {
  return path.replace(/:(\w+)/g, (_m, name: string) => {
    if (name === 'labId') return variant % 4 === 3 ? fx.labB.id : fx.labA.id;
    return variant % 3 === 0 ? 'not-a-uuid' : '00000000-0000-4000-8000-00000000000' + (variant % 10);
  });
}

describe('fuzzed bodies never cause a 5xx', () => {
  for (const def of apiRoutes.filter((r) => !r.path.includes('/live'))) {
    it(`${describeRoute(def)}`, async () => {
      const row = { route: describeRoute(def), sent: 0, statuses: {} as Record<number, number> };
      tally.push(row);
      // A session of its own per route: a fuzzed sign-out must not leave every later route answering 401 before its
      // handler runs. Sign-out ends the session it is sent with, so it gets a fresh one per request.
      const endsSession = def.path === '/auth/logout';
      let token = (await fx.session(fx.people.manager.id)).accessToken;
      let signedInRefused = 0;
      const arb = fc.tuple(bodyArbitrary(def.body), bodyArbitrary(def.query), fc.nat(1000), fc.boolean());
      await fc.assert(
        fc.asyncProperty(arb, async ([body, query, variant, signedIn]) => {
          const url = `/api${pathFor(def.path, variant)}`;
          let req = fx.api()[def.method](url);
          if (endsSession) token = (await fx.session(fx.people.manager.id)).accessToken;
          const withToken = signedIn || def.access !== 'public';
          if (withToken) req = req.set('authorization', `Bearer ${token}`);
          if (query && typeof query === 'object' && !Array.isArray(query)) req = req.query(query as Record<string, string>);
          // Sent as JSON text so any value (a bare number, a string, null) goes on the wire as a client could send it.
          const json = body === undefined ? undefined : JSON.stringify(body);
          const res = def.method === 'get' || json === undefined ? await req : await req.set('content-type', 'application/json').send(json);
          row.sent++;
          row.statuses[res.status] = (row.statuses[res.status] ?? 0) + 1;
          const code = res.body?.error?.code;
          if (withToken && def.access !== 'public' && (code === 'unauthenticated' || code === 'invalid_token')) signedInRefused++;
          if (res.status >= 500) throw new Error(`${res.status} for ${JSON.stringify(body).slice(0, 300)}: ${JSON.stringify(res.body)}`);
          if (res.status >= 400) expect(res.body?.error?.code, `error shape for ${url}`).toBeTypeOf('string');
        }),
        { numRuns: PER_ROUTE, seed: SEED, endOnFailure: true },
      );
      expect(signedInRefused, 'signed-in requests refused as unauthenticated never reached the route').toBe(0);
    });
  }
});
