import fc from 'fast-check';
import { mkdtempSync, rmSync } from 'node:fs';
import type { Server } from 'node:http';
import { tmpdir } from 'node:os';
import path from 'node:path';
import request, { type Response } from 'supertest';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { rateLimits } from '../../db/schema';
import { apiRoutes } from '../../server/api';
import { authFixture, type AuthFixture } from '../../server/auth/test-fixture';
import { describeRoute, type RouteDef } from '../../server/http/routes';
import { LocalDiskStore, useStorage } from '../../server/storage';
import { closeTemplate } from '../../server/testing/db';
import { bodyArbitrary, jsonSchemaOf, type JsonSchema } from './body-arbitrary';
import { applyMutation, describeMutation, mutationArbitrary, type Mutation } from './mutations';
import { seedLab, type LabRecords } from './records';
import { BAD_UPLOADS, VALID_UPLOADS } from './uploads';
import { defaultId, specs, type Ctx, type Example, type RouteSpec } from './valid-requests';

// Passwords set through the API (reset, accepted invitations) and the sign-in route's dummy hash for unknown
// addresses cost over a second each at scrypt's full cost on a loaded machine, and the suite sends hundreds: hash at
// the fixture's low cost instead. Verification reads the cost from the stored hash, so every code path stays the same.
vi.mock('../../server/auth/password', async (importOriginal) => {
  const actual = await importOriginal<typeof import('../../server/auth/password')>();
  return { ...actual, hashPassword: (password: string) => actual.hashPassword(password, { ...actual.SCRYPT_PARAMS, N: 2 ** 10 }) };
});

/**
 * Fuzzed requests for every API route: the server may refuse them (4xx) but must never fail (5xx). Signed in as a
 * manager of lab A, against real records of lab A (made through the API in beforeAll), so requests reach the
 * handlers' real work. Per route:
 * - 3 in 5 start from a known-valid request (valid-requests.ts), sent as is (every other one) or changed one field at
 *   a time (mutations.ts); the upload routes send files instead (uploads.ts);
 * - 2 in 5 are generated from the route's zod schemas, mixed with wild values (body-arbitrary.ts).
 * Path ids are lab A's real ones for most requests; the rest are lab B's (wrong lab), nonexistent or malformed.
 * The mix is fixed by the request's index (content is random), so how many requests get past validation and lookup
 * does not swing from seed to seed, and a route fails when too few do.
 */
const FULL = process.env.RELIABILITY === 'full';
const PER_ROUTE = Number(process.env.FUZZ_PER_ROUTE) || (FULL ? 1000 : 25);
const SEED = Number(process.env.FUZZ_SEED ?? Date.now() % 2 ** 31);
/**
 * A route fails when fewer than this share of its requests got past validation and lookup. Every route's as-is
 * valid requests with real ids alone make about 26 % (3/5 · 1/2 · 6/7), so 20 % fails only when those are refused.
 */
const MIN_PAST = 0.2;

type Mode = 'real' | 'otherLab' | 'foreignRecord' | 'missing' | 'malformed';
const MALFORMED = ['not-a-uuid', '0', 'null', '%', ' ', '1e999', "'; drop table runs; --", '00000000-0000-0000-0000-00000000000g', 'ü', 'x'.repeat(300)];

/** What became of a request: past validation and lookup, or where it stopped. */
type Outcome = 'past' | 'validation' | 'lookup' | 'refused' | 'limited' | 'noRoute';
const EDGE_VALIDATION = new Set(['malformed_json', 'bad_request', 'too_large', 'file_too_large', 'no_file', 'bad_upload', 'unsupported_type', 'type_mismatch']);
const LOOKUP = new Set(['not_found', 'invalid_invitation', 'invalid_link', 'invalid_refresh']);
const REFUSED = new Set(['unauthenticated', 'invalid_token', 'forbidden', 'invalid_credentials', 'reauth_failed']);

function outcome(res: Response): Outcome {
  if (res.status < 400) return 'past';
  if (res.status === 429) return 'limited';
  const error = res.body?.error ?? {};
  // The route table's zod parse answers with this message; a handler's own invalid_input (a date in the future, a
  // calibration the science refuses) means the request got into the handler.
  if (error.code === 'invalid_input') return error.message === 'The request did not pass validation.' ? 'validation' : 'past';
  if (EDGE_VALIDATION.has(error.code)) return 'validation';
  // A lookup 404 names what was not found; an unknown route is "no_such_route".
  if (LOOKUP.has(error.code)) return 'lookup';
  if (error.code === 'no_such_route') return 'noRoute';
  if (REFUSED.has(error.code)) return 'refused';
  return 'past';
}

interface Row {
  route: string;
  sent: number;
  statuses: Record<number, number>;
  outcomes: Record<Outcome, number>;
  ms: number;
}
const tally: Row[] = [];

let fx: AuthFixture;
let server: Server;
let a: LabRecords;
let b: LabRecords;
let ctx: Ctx;
let storeDir: string;
let routeToken = '';
let unique = 0;

const api = () => request(server);

beforeAll(async () => {
  fx = await authFixture();
  // One listening server for the whole file (supertest would otherwise open one per request).
  server = fx.app.listen(0, '127.0.0.1');
  await new Promise((r) => server.once('listening', r));
  storeDir = mkdtempSync(path.join(tmpdir(), 'hm-fuzz-files-'));
  useStorage(fx.database, new LocalDiskStore(storeDir));
  a = await seedLab(fx, fx.labA, fx.people.manager);
  b = await seedLab(fx, fx.labB, fx.people.managerB);
  ctx = {
    fx: { ...fx, api },
    a,
    b,
    uniq: () => `${SEED.toString(36)}-${++unique}`,
    token: () => routeToken,
    resetUser: await fx.person(null, 'analyst', 'reset'),
    clearLimits: async () => void (await fx.database.db.delete(rateLimits)),
  };
}, 300_000);

afterAll(async () => {
  console.log(`fuzz seed ${SEED}; ${PER_ROUTE} requests per route; "past" = got past validation and lookup`);
  for (const t of tally) {
    const o = t.outcomes;
    console.log(
      `  ${t.route}: ${t.sent} sent, past ${o.past} (${Math.round((100 * o.past) / t.sent)} %), validation ${o.validation}, lookup ${o.lookup}, ` +
        `refused ${o.refused}, 429 ${o.limited}; statuses ${JSON.stringify(t.statuses)}; ${(t.ms / 1000).toFixed(1)} s`,
    );
  }
  server?.closeAllConnections?.();
  await new Promise((r) => server?.close(r));
  await fx?.database.close();
  await closeTemplate();
  if (storeDir) rmSync(storeDir, { recursive: true, force: true });
});

interface Plan {
  pick: number;
  mutation: Mutation;
  signedIn: boolean;
  missingId: string;
  malformed: string;
  /** Schema branch only. */
  body?: unknown;
  query?: unknown;
}

const common = { signedIn: fc.boolean(), missingId: fc.uuid(), malformed: fc.constantFrom(...MALFORMED) };

/** The valid branch's plans: which example, and which change to it. */
async function validPlans(def: RouteDef, spec: RouteSpec, n: number, seed: number): Promise<Plan[]> {
  if (spec.upload) return fc.sample(fc.record({ pick: fc.nat(), mutation: fc.constant<Mutation>({ op: 'as-is' }), ...common }), { seed, numRuns: n });
  const templates: Example[] = [];
  for (const build of spec.valid) templates.push(await build(ctx));
  const schema: JsonSchema = { type: 'object', properties: { body: jsonSchemaOf(def.body) ?? {}, query: jsonSchemaOf(def.query) ?? {} } };
  const arb = fc.integer({ min: 0, max: templates.length - 1 }).chain((pick) =>
    fc.record({ pick: fc.constant(pick), mutation: mutationArbitrary(templates[pick], schema, [[], ['query']]), ...common }),
  );
  return fc.sample(arb, { seed, numRuns: n });
}

function schemaPlans(def: RouteDef, n: number, seed: number): Plan[] {
  const arb = fc.record({ pick: fc.constant(0), mutation: fc.constant<Mutation>({ op: 'as-is' }), body: bodyArbitrary(def.body), query: bodyArbitrary(def.query), ...common });
  return fc.sample(arb, { seed, numRuns: n });
}

/** The request's path: lab A's real ids, or the wrong lab's, a nonexistent or a malformed id. */
async function pathFor(def: RouteDef, spec: RouteSpec, mode: Mode, plan: Plan, n: number): Promise<{ url: string; foreign: boolean }> {
  const params = [...def.path.matchAll(/:(\w+)/g)].map((m) => m[1]);
  const records = params.filter((p) => p !== 'labId');
  // A lab route without a record id has no foreign record to take: its lab is the wrong one instead.
  const m: Mode = mode === 'foreignRecord' && !(params.includes('labId') && records.length) ? 'otherLab' : mode;
  const values: Record<string, string> = {};
  for (const p of params) {
    const bad = m === 'missing' || m === 'malformed';
    if (bad && (p !== 'labId' || !records.length)) {
      values[p] = m === 'missing' ? plan.missingId : plan.malformed;
      continue;
    }
    const lab = m === 'otherLab' || (m === 'foreignRecord' && p !== 'labId') ? b : a;
    const idOf = spec.ids?.[p];
    values[p] = idOf ? await idOf(ctx, lab, n) : defaultId(p, def.path, lab, n);
  }
  const url = def.path.replace(/:(\w+)/g, (_m, p: string) => encodeURIComponent(values[p]));
  return { url: `/api${url}`, foreign: m === 'foreignRecord' };
}

/** Header-safe text (a mutated cookie can hold anything; the client library refuses control characters). */
const headerText = (v: unknown) => (typeof v === 'string' ? v : JSON.stringify(v) ?? '').replace(/[^\t\x20-\x7e]/g, '').slice(0, 4000);

describe('fuzzed requests never cause a 5xx, and reach the handlers', () => {
  it('every route has a valid example', () => {
    expect(apiRoutes.map(describeRoute).filter((k) => !specs[k])).toEqual([]);
    expect(Object.keys(specs).filter((k) => !apiRoutes.some((r) => describeRoute(r) === k))).toEqual([]);
  });

  apiRoutes.forEach((def, routeIndex) => {
    const key = describeRoute(def);
    it(key, async () => {
      const spec = specs[key];
      expect(spec, `no valid example for ${key} in valid-requests.ts`).toBeDefined();
      const started = Date.now();
      const row: Row = { route: key, sent: 0, statuses: {}, outcomes: { past: 0, validation: 0, lookup: 0, refused: 0, limited: 0, noRoute: 0 }, ms: 0 };
      tally.push(row);
      // A session of its own per route: a fuzzed sign-out must not leave every later route answering 401 before its
      // handler runs. Sign-out ends the session it is sent with, so it gets a fresh one per request.
      const endsSession = def.path === '/auth/logout';
      routeToken = (await fx.session(fx.people.manager.id)).accessToken;
      const nValid = Math.ceil((PER_ROUTE * 3) / 5);
      const valid = await validPlans(def, spec, nValid, SEED + routeIndex);
      const fuzzed = schemaPlans(def, PER_ROUTE - nValid, SEED + 7919 * (routeIndex + 1));
      const problems: string[] = [];
      let signedInRefused = 0;
      let stateChanged = true;
      let nv = 0;
      let ns = 0;

      for (let i = 0; i < PER_ROUTE; i++) {
        const fromValid = i % 5 < 3;
        const plan = fromValid ? valid[nv] : fuzzed[ns];
        let mode: Mode;
        let asIs = false;
        if (fromValid) {
          asIs = nv % 2 === 0;
          mode = nv % 7 === 6 ? (['otherLab', 'foreignRecord', 'missing', 'malformed'] as const)[Math.floor(nv / 7) % 4] : 'real';
          nv++;
        } else {
          const r = ns % 4;
          mode = r < 2 ? 'real' : r === 2 ? (['otherLab', 'foreignRecord'] as const)[Math.floor(ns / 4) % 2] : (['missing', 'malformed'] as const)[Math.floor(ns / 4) % 2];
          ns++;
        }

        if (endsSession) routeToken = (await fx.session(fx.people.manager.id)).accessToken;
        // Only a request that succeeded changed the record's state; until one does, the prepared state holds.
        if (fromValid && mode === 'real' && spec.prepare && stateChanged) {
          await spec.prepare(ctx);
          stateChanged = false;
        }
        const { url, foreign } = await pathFor(def, spec, mode, plan, i);

        let example: Example = {};
        let what: string;
        if (!fromValid) {
          example = { body: plan.body, query: plan.query as Example['query'] };
          what = 'schema-derived';
        } else if (spec.upload) {
          what = '';
        } else {
          example = await spec.valid[plan.pick](ctx);
          if (!asIs) example = applyMutation(example, plan.mutation);
          what = `valid #${plan.pick}, ${asIs ? 'as is' : describeMutation(plan.mutation)}`;
        }
        const upload = fromValid && spec.upload ? (asIs ? VALID_UPLOADS : BAD_UPLOADS)[plan.pick % (asIs ? VALID_UPLOADS : BAD_UPLOADS).length] : undefined;
        if (upload) what = `upload: ${upload.name}`;

        let req = api()[def.method](url);
        const withToken = plan.signedIn || def.access !== 'public';
        if (withToken) req = req.set('authorization', `Bearer ${routeToken}`);
        if (example.cookie !== undefined) req = req.set('cookie', headerText(example.cookie));
        const query = example.query;
        if (query && typeof query === 'object' && !Array.isArray(query)) req = req.query(query as Record<string, string>);
        let res: Response;
        if (upload) res = await upload.attach(req);
        else if (def.method === 'get' || example.body === undefined) res = await req;
        else {
          // Sent as JSON text so any value (a bare number, a string, null) goes on the wire as a client could send it.
          res = await req.set('content-type', 'application/json').send(JSON.stringify(example.body) ?? 'null');
        }

        if (res.status < 300) stateChanged = true;
        row.sent++;
        row.statuses[res.status] = (row.statuses[res.status] ?? 0) + 1;
        const got = outcome(res);
        row.outcomes[got]++;
        if (got === 'limited') await ctx.clearLimits();
        const code = res.body?.error?.code;
        const context = () => `#${i} ${mode} ${url} (${what}): ${JSON.stringify(example.body)?.slice(0, 300)} → ${res.status} ${JSON.stringify(res.body)?.slice(0, 300)}`;
        if (withToken && def.access !== 'public' && (code === 'unauthenticated' || code === 'invalid_token')) signedInRefused++;
        if (res.status >= 500) problems.push(`5xx: ${context()}`);
        else if (res.status >= 400 && typeof code !== 'string') problems.push(`error without a code: ${context()}`);
        if (got === 'noRoute') problems.push(`a declared route's path did not match: ${context()}`);
        if (foreign && res.status < 300 && !spec.foreignOk) problems.push(`lab B's record accepted under lab A: ${context()}`);
        // A valid request as is, with lab A's ids, gets through (a rate limiter may hold it back; the first request
        // is one of these, so a valid example that is not valid fails at once).
        if (fromValid && asIs && mode === 'real' && got !== 'past' && got !== 'limited') problems.push(`a valid request was refused: ${context()}`);
        if (problems.length >= 5) break;
      }
      row.ms = Date.now() - started;

      expect(problems, problems.join('\n')).toEqual([]);
      expect(signedInRefused, 'signed-in requests refused as unauthenticated never reached the route').toBe(0);
      expect(row.outcomes.past, `requests of ${key} that got past validation and lookup`).toBeGreaterThanOrEqual(Math.ceil(MIN_PAST * PER_ROUTE));
    });
  });
});
